"""The one progress helper: a bar on standard error for long work, off when nobody watches.

Every long command (``screen``, ``analyze`` over many frames, ``ladder``, ``salc`` on large
bases) and the batch API report through :func:`progress`. The bar is drawn by tqdm when it is
installed and only when standard error is a terminal (``enabled=None``); piped or redirected
runs, tests and notebooks without a terminal get no bar and pay nothing.
"""

from __future__ import annotations

import sys
from typing import Any

__all__ = ["Progress", "progress"]


class Progress:
    """A progress counter; a no-op unless a bar is shown. Use as a context manager."""

    def __init__(self, bar: Any = None):
        self._bar = bar

    @property
    def shown(self) -> bool:
        """True when a bar is drawn."""
        return self._bar is not None

    def update(self, n: int = 1) -> None:
        """Count ``n`` more items done."""
        if self._bar is not None:
            self._bar.update(n)

    def close(self) -> None:
        """Finish the bar (idempotent)."""
        if self._bar is not None:
            self._bar.close()
            self._bar = None

    def __enter__(self) -> Progress:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()


def progress(
    total: int | None, *, unit: str = "structure", desc: str | None = None, enabled: Any = None
) -> Progress:
    """A progress bar over ``total`` items (None: unknown total).

    Parameters
    ----------
    enabled : bool or None
        True: show a bar (if tqdm is installed); False: never; None: only when standard error
        is a terminal.
    """
    if enabled is None:
        enabled = bool(getattr(sys.stderr, "isatty", lambda: False)())
    if not enabled:
        return Progress()
    try:
        from tqdm import tqdm
    except ImportError:
        return Progress()
    return Progress(tqdm(total=total, unit=unit, desc=desc, smoothing=0.1, file=sys.stderr))
