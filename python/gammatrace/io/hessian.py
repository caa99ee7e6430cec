"""Cartesian Hessians from files: numpy ``.npy``, plain text and ASE vibration data.

Formats
-------
* ``.npy`` (``numpy.save``): a (3N, 3N) array, an (N, 3, N, 3) array, or a flat array holding
  the full matrix by rows or its lower triangle by rows (3N(3N + 1)/2 numbers).
* Plain text: numbers separated by white space, commas or semicolons; ``#`` starts a comment;
  Fortran exponents (``1.5D-03``) are read. The layout is the full 3N x 3N matrix (one row a
  line), its lower triangle by rows as a ragged triangle (1, 2, …, 3N numbers a line), or
  either of them as a flat run of numbers (any number a line, read row by row).
* ASE vibration data: the JSON file that ``ase.vibrations.VibrationsData.write`` produces
  (``"__ase_objtype__": "vibrationsdata"``, the Hessian in eV/Å², the atoms with their numbers,
  positions and, when set, masses). Read as plain JSON: ASE itself is not needed.

Atom-major order throughout: index 3 * atom + (x, y, z). A Hessian is checked once here
(:func:`validate_hessian`): finite, of the expected size, symmetric within a tolerance; the
symmetric part is what the rest of the package uses.
"""

from __future__ import annotations

import json
import re
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from ..errors import InputError, ReadError
from ..text import plural

__all__ = ["ASYMMETRY_TOLERANCE", "HessianFile", "read_hessian", "validate_hessian"]

#: Largest ‖H − Hᵀ‖ / ‖H‖ (Frobenius) accepted. Finite-difference Hessians built from gradients
#: are not exactly symmetric (the truncation error of the two one-sided derivatives differs),
#: at the level of 1e-4 relative; a matrix read in the wrong layout is off by order one.
ASYMMETRY_TOLERANCE = 1e-2

#: The unit ASE's vibration data are written in.
ASE_UNIT = "eV/angstrom2"

_NUMBER_SPLIT = re.compile(r"[\s,;]+")


@dataclass(frozen=True)
class HessianFile:
    """A Hessian read from a file, with what the file says about it.

    Attributes
    ----------
    matrix : ndarray, shape (3N, 3N)
        The symmetric part of the Hessian as read (units as in the file).
    source : str
        The path as given.
    format : str
        ``"npy"``, ``"text"`` or ``"ase-json"``.
    unit : str or None
        The force-constant unit the format fixes (``"eV/angstrom2"`` for ASE), else None.
    numbers, positions, masses : ndarray or None
        Atomic numbers, positions (Å) and masses (u) when the file holds them (ASE; masses
        only when they were set on the atoms).
    asymmetry : float
        ‖H − Hᵀ‖ / ‖H‖ of the matrix as read.
    """

    matrix: np.ndarray
    source: str
    format: str
    unit: str | None = None
    numbers: np.ndarray | None = None
    positions: np.ndarray | None = None
    masses: np.ndarray | None = None
    asymmetry: float = 0.0

    @property
    def n_atoms(self) -> int:
        """N, from the matrix size 3N."""
        return self.matrix.shape[0] // 3


def validate_hessian(
    matrix: Any,
    n_atoms: int | None = None,
    source: str = "hessian",
    asymmetry_tolerance: float = ASYMMETRY_TOLERANCE,
) -> tuple[np.ndarray, float]:
    """Check a Hessian and return its symmetric part with its relative asymmetry.

    Parameters
    ----------
    matrix : array_like, shape (3N, 3N)
    n_atoms : int, optional
        N; when given the size must be 3N.
    source : str
        What to call the matrix in messages (a file name, ``"hessian"``).
    asymmetry_tolerance : float
        Largest ‖H − Hᵀ‖ / ‖H‖ accepted.

    Returns
    -------
    (ndarray, float)
        (H + Hᵀ) / 2 and ‖H − Hᵀ‖ / ‖H‖.

    Raises
    ------
    InputError
        For a matrix that is not square of size 3N, holds NaN or infinities, or is not
        symmetric within the tolerance; the message names ``source``, the shape and the entry.
    """
    arr = np.asarray(matrix, dtype=np.float64)
    if arr.ndim != 2 or arr.shape[0] != arr.shape[1] or arr.shape[0] % 3 or arr.size == 0:
        want = "(3N, 3N)" if n_atoms is None else f"({3 * n_atoms}, {3 * n_atoms})"
        extra = "" if n_atoms is None else f" for {plural(n_atoms, 'atom')}"
        raise InputError(f"{source}: expected shape {want}{extra}, received {arr.shape}")
    if n_atoms is not None and arr.shape[0] != 3 * n_atoms:
        raise InputError(
            f"{source}: expected shape ({3 * n_atoms}, {3 * n_atoms}) for "
            f"{plural(n_atoms, 'atom')}, received {arr.shape}"
        )
    bad = ~np.isfinite(arr)
    if bad.any():
        i, j = np.argwhere(bad)[0]
        raise InputError(
            f"{source}: contains NaN or infinite entries ({int(bad.sum())} of {arr.size}; "
            f"the first at row {i}, column {j} of the {arr.shape[0]} x {arr.shape[1]} matrix)"
        )
    norm = float(np.linalg.norm(arr))
    diff = arr - arr.T
    asym = float(np.linalg.norm(diff)) / norm if norm > 0 else 0.0
    if asym > asymmetry_tolerance:
        i, j = np.unravel_index(int(np.argmax(np.abs(diff))), diff.shape)
        raise InputError(
            f"{source}: expected a symmetric matrix, ‖H − Hᵀ‖/‖H‖ = {asym:.3g} > "
            f"{asymmetry_tolerance:g} (largest |H[i,j] − H[j,i]| = {abs(diff[i, j]):.3g} at "
            f"row {i}, column {j}); is the layout right?"
        )
    return 0.5 * (arr + arr.T), asym


def _triangle_size(count: int) -> int | None:
    """n with n(n + 1)/2 == count, or None."""
    n = int((np.sqrt(8 * count + 1) - 1) / 2)
    for k in (n - 1, n, n + 1):
        if k > 0 and k * (k + 1) // 2 == count:
            return k
    return None


def _square_size(count: int) -> int | None:
    n = round(float(np.sqrt(count)))
    return n if n > 0 and n * n == count else None


def _from_lower(values: np.ndarray, n: int) -> np.ndarray:
    out = np.zeros((n, n))
    out[np.tril_indices(n)] = values
    return out + np.tril(out, -1).T


def _from_flat(values: np.ndarray, n3: int | None, source: str, layout: str) -> np.ndarray:
    """A flat run of numbers: the full matrix by rows or its lower triangle by rows."""
    count = values.size
    if n3 is not None:
        if count == n3 * n3:
            return values.reshape(n3, n3)
        if count == n3 * (n3 + 1) // 2:
            return _from_lower(values, n3)
        raise ReadError(
            f"{source}: {count} numbers ({layout}); a Hessian of {n3 // 3} atoms needs "
            f"{n3 * n3} (the full {n3} x {n3} matrix) or {n3 * (n3 + 1) // 2} (its lower "
            "triangle by rows)"
        )
    full, tri = _square_size(count), _triangle_size(count)
    full = full if full is not None and full % 3 == 0 else None
    tri = tri if tri is not None and tri % 3 == 0 else None
    if full is not None and tri is not None:
        raise ReadError(
            f"{source}: {count} numbers fit both a full {full} x {full} matrix and the lower "
            f"triangle of a {tri} x {tri} one; give the number of atoms"
        )
    if full is not None:
        return values.reshape(full, full)
    if tri is not None:
        return _from_lower(values, tri)
    raise ReadError(
        f"{source}: {count} numbers ({layout}) are neither a full 3N x 3N matrix nor its "
        "lower triangle (3N(3N + 1)/2 numbers) for any N"
    )


def _read_text(path: Path, source: str, n3: int | None) -> np.ndarray:
    try:
        text = path.read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError) as exc:
        raise ReadError(f"{source}: cannot read the file ({exc})") from None
    rows = []
    for lineno, line in enumerate(text.splitlines(), start=1):
        body = line.split("#", 1)[0].strip().strip(",;")
        if not body:
            continue
        tokens = _NUMBER_SPLIT.split(body)
        try:
            rows.append([float(t.replace("D", "E").replace("d", "e")) for t in tokens])
        except ValueError:
            bad = next(t for t in tokens if not _is_number(t))
            raise ReadError(f"{source}, line {lineno}: {bad!r} is not a number") from None
    if not rows:
        raise ReadError(f"{source}: no numbers in the file")
    lengths = [len(r) for r in rows]
    n_rows = len(rows)
    if n_rows > 1 and all(k == n_rows for k in lengths):
        layout = f"a {n_rows} x {n_rows} matrix"
        matrix = np.array(rows)
    elif n_rows > 1 and lengths == list(range(1, n_rows + 1)):
        layout = f"a lower triangle of {n_rows} rows"
        matrix = _from_lower(np.concatenate([np.array(r) for r in rows]), n_rows)
    else:
        values = np.concatenate([np.array(r) for r in rows])
        shape = f"{n_rows} lines of {min(lengths)} to {max(lengths)} numbers"
        return _from_flat(values, n3, source, shape)
    if n3 is not None and matrix.shape[0] != n3:
        raise ReadError(
            f"{source}: {layout}; a Hessian of {n3 // 3} atoms is {n3} x {n3} "
            f"(full, or its lower triangle by rows)"
        )
    return matrix


def _is_number(token: str) -> bool:
    try:
        float(token.replace("D", "E").replace("d", "e"))
    except ValueError:
        return False
    return True


def _read_npy(path: Path, source: str, n3: int | None) -> np.ndarray:
    try:
        arr = np.load(path, allow_pickle=False)
    except (OSError, ValueError) as exc:
        raise ReadError(f"{source}: cannot read a numpy array ({exc})") from None
    if not isinstance(arr, np.ndarray) or arr.dtype.kind not in "biuf":
        kind = getattr(arr, "dtype", type(arr).__name__)
        raise ReadError(f"{source}: expected a real numeric array, received {kind}")
    arr = arr.astype(np.float64)
    if arr.ndim == 4 and arr.shape[1] == 3 and arr.shape[3] == 3 and arr.shape[0] == arr.shape[2]:
        return arr.reshape(3 * arr.shape[0], 3 * arr.shape[0])
    if arr.ndim == 1:
        return _from_flat(arr, n3, source, f"a flat array of shape {arr.shape}")
    if arr.ndim != 2:
        raise ReadError(
            f"{source}: expected an array of shape (3N, 3N), (N, 3, N, 3) or a flat one, "
            f"received {arr.shape}"
        )
    return arr


def _decode(obj: Any, source: str) -> Any:
    """ASE's JSON encoding of arrays: {"__ndarray__": [shape, dtype, flat values]}."""
    if isinstance(obj, dict):
        if "__ndarray__" in obj:
            shape, dtype, flat = obj["__ndarray__"]
            return np.asarray(flat, dtype=dtype).reshape(shape)
        if "__complex_ndarray__" in obj:
            raise ReadError(f"{source}: a complex array where a real Hessian was expected")
        return {k: _decode(v, source) for k, v in obj.items()}
    if isinstance(obj, list):
        return [_decode(v, source) for v in obj]
    return obj


def _read_ase(path: Path, source: str) -> HessianFile:
    try:
        raw = json.loads(path.read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError, ValueError) as exc:
        raise ReadError(f"{source}: cannot read JSON ({exc})") from None
    if not isinstance(raw, dict) or raw.get("__ase_objtype__") != "vibrationsdata":
        raise ReadError(
            f"{source}: a JSON file that is not ASE vibration data (expected "
            '"__ase_objtype__": "vibrationsdata", as VibrationsData.write produces)'
        )
    try:
        data = _decode(raw, source)
        atoms = data["atoms"]
        numbers = np.asarray(atoms["numbers"], dtype=np.int64)
        positions = np.asarray(atoms["positions"], dtype=np.float64).reshape(-1, 3)
        masses = atoms.get("masses")
        hess = np.asarray(data["hessian"], dtype=np.float64)
        indices = data.get("indices")
    except (KeyError, TypeError, ValueError) as exc:
        raise ReadError(f"{source}: malformed ASE vibration data ({exc})") from None
    n = len(numbers)
    covered = None if indices is None else [int(k) for k in np.asarray(indices).ravel()]
    if covered is not None and covered != list(range(n)):
        raise ReadError(
            f"{source}: the Hessian covers atoms {covered} of {n}; "
            "the modes need a Hessian over every atom"
        )
    k = 3 * n
    if hess.size != k * k:
        raise ReadError(
            f"{source}: Hessian of shape {hess.shape} for {plural(n, 'atom')} "
            f"(expected ({n}, 3, {n}, 3))"
        )
    return HessianFile(
        hess.reshape(k, k),
        source,
        "ase-json",
        ASE_UNIT,
        numbers,
        positions,
        None if masses is None else np.asarray(masses, dtype=np.float64),
    )


def read_hessian(path: Any, n_atoms: int | None = None) -> HessianFile:
    """Read a Cartesian Hessian from ``.npy``, plain text or ASE vibration data (JSON).

    The format is recognised from the content (the numpy magic string, a JSON object), then
    the extension; anything else is read as text.

    Parameters
    ----------
    path : str or os.PathLike
    n_atoms : int, optional
        N, when known: the matrix must then be 3N x 3N (and a flat run of numbers is read
        as whichever layout has that size).

    Returns
    -------
    HessianFile
        With the symmetric part of the matrix.

    Raises
    ------
    ReadError
        For a missing or malformed file; the message names the file and the layout found.
    InputError
        For a matrix of the wrong size, with NaN, or not symmetric (see
        :func:`validate_hessian`).

    Examples
    --------
    >>> import pathlib, tempfile
    >>> p = pathlib.Path(tempfile.mkdtemp()) / "h.txt"
    >>> _ = p.write_text("1\\n0 1\\n0 0 1\\n")
    >>> read_hessian(p).matrix.shape
    (3, 3)
    """
    p = Path(path)
    source = str(path)
    if not p.is_file():
        raise ReadError(f"{source}: no such file")
    n3 = None if n_atoms is None else 3 * int(n_atoms)
    with p.open("rb") as fh:
        head = fh.read(64)
    if head.startswith(b"\x93NUMPY") or p.suffix.lower() == ".npy":
        matrix, fmt, found = _read_npy(p, source, n3), "npy", None
    elif head.lstrip().startswith(b"{") or p.suffix.lower() == ".json":
        found = _read_ase(p, source)
        matrix, fmt = found.matrix, found.format
    else:
        matrix, fmt, found = _read_text(p, source, n3), "text", None
    sym, asym = validate_hessian(matrix, n_atoms, source)
    if found is not None:
        return HessianFile(
            sym, source, fmt, found.unit, found.numbers, found.positions, found.masses, asym
        )
    return HessianFile(sym, source, fmt, asymmetry=asym)
