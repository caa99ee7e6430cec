"""What every command writes: JSON rows, UTF-8 text on stdout, and the one stderr error line.

Shared by :mod:`gammatrace.cli` and the command modules it registers, defined once here so
that the command modules never import the entry point (no import cycle).
"""

from __future__ import annotations

import json
import sys
import traceback
from typing import Any

__all__ = ["dump", "fail", "write"]


def write(text: str) -> None:
    """Write text to stdout as UTF-8, whatever the terminal's encoding."""
    sys.stdout.buffer.write(text.encode("utf-8"))


def dump(obj: Any) -> str:
    """One JSON row: UTF-8 kept (Greek labels, ∞), NaN refused."""
    return json.dumps(obj, ensure_ascii=False, allow_nan=False)


def fail(exc: BaseException, show_traceback: bool, where: str = "") -> None:
    """The one stderr line of a failure (``--traceback`` adds the full story)."""
    if show_traceback:
        traceback.print_exception(type(exc), exc, exc.__traceback__, file=sys.stderr)
    print(f"gammatrace: {type(exc).__name__}: {where}{exc}", file=sys.stderr)
