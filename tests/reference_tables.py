"""Published character tables, copied as literal data for the table tests.

Each table names its source. All of them were typed from memory of the printed tables
(so each carries "# from memory" as well); the tests cross-check them against the
generated tables, and independently check orthogonality, so a slip on either side shows.

Format of ``rows``: one irrep per line, ``label | characters | linear and rotations |
quadratic``. Characters are numbers or the tokens below. Functions are separated by
``;`` and written in the package's ASCII spelling (x2 for x²). Where a printed table
lists a complex-conjugate pair (Cnh, S2n, T, Th), it is given here with the pair combined
into one real E and the columns of g and g⁻¹ merged (e.g. C3, C3² -> 2C3), which is the
form the package reports.
"""

import math

_C72 = 2 * math.cos(math.radians(72))  # 2cos72° = (√5 − 1)/2
_C144 = 2 * math.cos(math.radians(144))  # 2cos144° = −(1 + √5)/2
TOKENS = {
    "c72": _C72,
    "c144": _C144,
    "-c72": -_C72,
    "-c144": -_C144,
    "r2": math.sqrt(2.0),
    "-r2": -math.sqrt(2.0),
    "g+": (1 + math.sqrt(5.0)) / 2,  # (1 + √5)/2
    "g-": (1 - math.sqrt(5.0)) / 2,  # (1 − √5)/2
    "-g+": -(1 + math.sqrt(5.0)) / 2,
    "-g-": -(1 - math.sqrt(5.0)) / 2,
}

COTTON = "F. A. Cotton, Chemical Applications of Group Theory, 3rd ed., Appendix IIA"
ACP = "P. W. Atkins, M. S. Child, C. S. G. Phillips, Tables for Group Theory (OUP 1970)"

PUBLISHED = {}


def _add(name, source, classes, rows):
    PUBLISHED[name] = {"source": source, "classes": classes.split(), "rows": rows.strip()}


# Source: Cotton, Appendix IIA, C2v table  # from memory
_add(
    "C2v",
    COTTON,
    "E C2 σv(xz) σv'(yz)",
    """
A1 | 1 1 1 1 | z | x2; y2; z2
A2 | 1 1 -1 -1 | Rz | xy
B1 | 1 -1 1 -1 | x; Ry | xz
B2 | 1 -1 -1 1 | y; Rx | yz
""",
)

# Source: Cotton, Appendix IIA, C3v table  # from memory
_add(
    "C3v",
    COTTON,
    "E 2C3 3σv",
    """
A1 | 1 1 1 | z | x2+y2; z2
A2 | 1 1 -1 | Rz |
E | 2 -1 0 | (x,y); (Rx,Ry) | (x2-y2,xy); (xz,yz)
""",
)

# Source: Cotton, Appendix IIA, C4v table  # from memory
_add(
    "C4v",
    COTTON,
    "E 2C4 C2 2σv 2σd",
    """
A1 | 1 1 1 1 1 | z | x2+y2; z2
A2 | 1 1 1 -1 -1 | Rz |
B1 | 1 -1 1 1 -1 | | x2-y2
B2 | 1 -1 1 -1 1 | | xy
E | 2 0 -2 0 0 | (x,y); (Rx,Ry) | (xz,yz)
""",
)

# Source: Cotton, Appendix IIA, C5v table  # from memory
_add(
    "C5v",
    COTTON,
    "E 2C5 2C5^2 5σv",
    """
A1 | 1 1 1 1 | z | x2+y2; z2
A2 | 1 1 1 -1 | Rz |
E1 | 2 c72 c144 0 | (x,y); (Rx,Ry) | (xz,yz)
E2 | 2 c144 c72 0 | | (x2-y2,xy)
""",
)

# Source: Cotton, Appendix IIA, C6v table  # from memory
_add(
    "C6v",
    COTTON,
    "E 2C6 2C3 C2 3σv 3σd",
    """
A1 | 1 1 1 1 1 1 | z | x2+y2; z2
A2 | 1 1 1 1 -1 -1 | Rz |
B1 | 1 -1 1 -1 1 -1 | |
B2 | 1 -1 1 -1 -1 1 | |
E1 | 2 1 -1 -2 0 0 | (x,y); (Rx,Ry) | (xz,yz)
E2 | 2 -1 -1 2 0 0 | | (x2-y2,xy)
""",
)

# Source: Cotton, Appendix IIA, C2h table  # from memory
_add(
    "C2h",
    COTTON,
    "E C2 i σh",
    """
Ag | 1 1 1 1 | Rz | x2; y2; z2; xy
Bg | 1 -1 1 -1 | Rx; Ry | xz; yz
Au | 1 1 -1 -1 | z |
Bu | 1 -1 -1 1 | x; y |
""",
)

# Source: Cotton, Appendix IIA, C3h table (complex pairs combined)  # from memory
_add(
    "C3h",
    COTTON,
    "E 2C3 σh 2S3",
    """
A' | 1 1 1 1 | Rz | x2+y2; z2
E' | 2 -1 2 -1 | (x,y) | (x2-y2,xy)
A'' | 1 1 -1 -1 | z |
E'' | 2 -1 -2 1 | (Rx,Ry) | (xz,yz)
""",
)

# Source: Cotton, Appendix IIA, C4h table (complex pairs combined)  # from memory
_add(
    "C4h",
    COTTON,
    "E 2C4 C2 i 2S4 σh",
    """
Ag | 1 1 1 1 1 1 | Rz | x2+y2; z2
Bg | 1 -1 1 1 -1 1 | | x2-y2; xy
Eg | 2 0 -2 2 0 -2 | (Rx,Ry) | (xz,yz)
Au | 1 1 1 -1 -1 -1 | z |
Bu | 1 -1 1 -1 1 -1 | |
Eu | 2 0 -2 -2 0 2 | (x,y) |
""",
)

# Source: Cotton, Appendix IIA, D2h table  # from memory
_add(
    "D2h",
    COTTON,
    "E C2(z) C2(y) C2(x) i σ(xy) σ(xz) σ(yz)",
    """
Ag | 1 1 1 1 1 1 1 1 | | x2; y2; z2
B1g | 1 1 -1 -1 1 1 -1 -1 | Rz | xy
B2g | 1 -1 1 -1 1 -1 1 -1 | Ry | xz
B3g | 1 -1 -1 1 1 -1 -1 1 | Rx | yz
Au | 1 1 1 1 -1 -1 -1 -1 | |
B1u | 1 1 -1 -1 -1 -1 1 1 | z |
B2u | 1 -1 1 -1 -1 1 -1 1 | y |
B3u | 1 -1 -1 1 -1 1 1 -1 | x |
""",
)

# Source: Cotton, Appendix IIA, D2 table  # from memory
_add(
    "D2",
    COTTON,
    "E C2(z) C2(y) C2(x)",
    """
A | 1 1 1 1 | | x2; y2; z2
B1 | 1 1 -1 -1 | z; Rz | xy
B2 | 1 -1 1 -1 | y; Ry | xz
B3 | 1 -1 -1 1 | x; Rx | yz
""",
)

# Source: Cotton, Appendix IIA, D3 table  # from memory
_add(
    "D3",
    COTTON,
    "E 2C3 3C2",
    """
A1 | 1 1 1 | | x2+y2; z2
A2 | 1 1 -1 | z; Rz |
E | 2 -1 0 | (x,y); (Rx,Ry) | (x2-y2,xy); (xz,yz)
""",
)

# Source: Cotton, Appendix IIA, D3h table  # from memory
_add(
    "D3h",
    COTTON,
    "E 2C3 3C2 σh 2S3 3σv",
    """
A1' | 1 1 1 1 1 1 | | x2+y2; z2
A2' | 1 1 -1 1 1 -1 | Rz |
E' | 2 -1 0 2 -1 0 | (x,y) | (x2-y2,xy)
A1'' | 1 1 1 -1 -1 -1 | |
A2'' | 1 1 -1 -1 -1 1 | z |
E'' | 2 -1 0 -2 1 0 | (Rx,Ry) | (xz,yz)
""",
)

# Source: Cotton, Appendix IIA, D4h table  # from memory
_add(
    "D4h",
    COTTON,
    "E 2C4 C2 2C2' 2C2'' i 2S4 σh 2σv 2σd",
    """
A1g | 1 1 1 1 1 1 1 1 1 1 | | x2+y2; z2
A2g | 1 1 1 -1 -1 1 1 1 -1 -1 | Rz |
B1g | 1 -1 1 1 -1 1 -1 1 1 -1 | | x2-y2
B2g | 1 -1 1 -1 1 1 -1 1 -1 1 | | xy
Eg | 2 0 -2 0 0 2 0 -2 0 0 | (Rx,Ry) | (xz,yz)
A1u | 1 1 1 1 1 -1 -1 -1 -1 -1 | |
A2u | 1 1 1 -1 -1 -1 -1 -1 1 1 | z |
B1u | 1 -1 1 1 -1 -1 1 -1 -1 1 | |
B2u | 1 -1 1 -1 1 -1 1 -1 1 -1 | |
Eu | 2 0 -2 0 0 -2 0 2 0 0 | (x,y) |
""",
)

# Source: Cotton, Appendix IIA, D5h table  # from memory
_add(
    "D5h",
    COTTON,
    "E 2C5 2C5^2 5C2 σh 2S5 2S5^3 5σv",
    """
A1' | 1 1 1 1 1 1 1 1 | | x2+y2; z2
A2' | 1 1 1 -1 1 1 1 -1 | Rz |
E1' | 2 c72 c144 0 2 c72 c144 0 | (x,y) |
E2' | 2 c144 c72 0 2 c144 c72 0 | | (x2-y2,xy)
A1'' | 1 1 1 1 -1 -1 -1 -1 | |
A2'' | 1 1 1 -1 -1 -1 -1 1 | z |
E1'' | 2 c72 c144 0 -2 -c72 -c144 0 | (Rx,Ry) | (xz,yz)
E2'' | 2 c144 c72 0 -2 -c144 -c72 0 | |
""",
)

# Source: Cotton, Appendix IIA, D6h table  # from memory
_add(
    "D6h",
    COTTON,
    "E 2C6 2C3 C2 3C2' 3C2'' i 2S3 2S6 σh 3σd 3σv",
    """
A1g | 1 1 1 1 1 1 1 1 1 1 1 1 | | x2+y2; z2
A2g | 1 1 1 1 -1 -1 1 1 1 1 -1 -1 | Rz |
B1g | 1 -1 1 -1 1 -1 1 -1 1 -1 1 -1 | |
B2g | 1 -1 1 -1 -1 1 1 -1 1 -1 -1 1 | |
E1g | 2 1 -1 -2 0 0 2 1 -1 -2 0 0 | (Rx,Ry) | (xz,yz)
E2g | 2 -1 -1 2 0 0 2 -1 -1 2 0 0 | | (x2-y2,xy)
A1u | 1 1 1 1 1 1 -1 -1 -1 -1 -1 -1 | |
A2u | 1 1 1 1 -1 -1 -1 -1 -1 -1 1 1 | z |
B1u | 1 -1 1 -1 1 -1 -1 1 -1 1 -1 1 | |
B2u | 1 -1 1 -1 -1 1 -1 1 -1 1 1 -1 | |
E1u | 2 1 -1 -2 0 0 -2 -1 1 2 0 0 | (x,y) |
E2u | 2 -1 -1 2 0 0 -2 1 1 -2 0 0 | |
""",
)

# Source: Cotton, Appendix IIA, D2d table  # from memory
_add(
    "D2d",
    COTTON,
    "E 2S4 C2 2C2' 2σd",
    """
A1 | 1 1 1 1 1 | | x2+y2; z2
A2 | 1 1 1 -1 -1 | Rz |
B1 | 1 -1 1 1 -1 | | x2-y2
B2 | 1 -1 1 -1 1 | z | xy
E | 2 0 -2 0 0 | (x,y); (Rx,Ry) | (xz,yz)
""",
)

# Source: Cotton, Appendix IIA, D3d table  # from memory
_add(
    "D3d",
    COTTON,
    "E 2C3 3C2 i 2S6 3σd",
    """
A1g | 1 1 1 1 1 1 | | x2+y2; z2
A2g | 1 1 -1 1 1 -1 | Rz |
Eg | 2 -1 0 2 -1 0 | (Rx,Ry) | (x2-y2,xy); (xz,yz)
A1u | 1 1 1 -1 -1 -1 | |
A2u | 1 1 -1 -1 -1 1 | z |
Eu | 2 -1 0 -2 1 0 | (x,y) |
""",
)

# Source: Cotton, Appendix IIA, D4d table  # from memory
_add(
    "D4d",
    COTTON,
    "E 2S8 2C4 2S8^3 C2 4C2' 4σd",
    """
A1 | 1 1 1 1 1 1 1 | | x2+y2; z2
A2 | 1 1 1 1 1 -1 -1 | Rz |
B1 | 1 -1 1 -1 1 1 -1 | |
B2 | 1 -1 1 -1 1 -1 1 | z |
E1 | 2 r2 0 -r2 -2 0 0 | (x,y) |
E2 | 2 0 -2 0 2 0 0 | | (x2-y2,xy)
E3 | 2 -r2 0 r2 -2 0 0 | (Rx,Ry) | (xz,yz)
""",
)

# Source: Cotton, Appendix IIA, D5d table  # from memory
_add(
    "D5d",
    COTTON,
    "E 2C5 2C5^2 5C2 i 2S10^3 2S10 5σd",
    """
A1g | 1 1 1 1 1 1 1 1 | | x2+y2; z2
A2g | 1 1 1 -1 1 1 1 -1 | Rz |
E1g | 2 c72 c144 0 2 c72 c144 0 | (Rx,Ry) | (xz,yz)
E2g | 2 c144 c72 0 2 c144 c72 0 | | (x2-y2,xy)
A1u | 1 1 1 1 -1 -1 -1 -1 | |
A2u | 1 1 1 -1 -1 -1 -1 1 | z |
E1u | 2 c72 c144 0 -2 -c72 -c144 0 | (x,y) |
E2u | 2 c144 c72 0 -2 -c144 -c72 0 | |
""",
)

# Source: Cotton, Appendix IIA, S4 table (complex pair combined)  # from memory
_add(
    "S4",
    COTTON,
    "E 2S4 C2",
    """
A | 1 1 1 | Rz | x2+y2; z2
B | 1 -1 1 | z | x2-y2; xy
E | 2 0 -2 | (x,y); (Rx,Ry) | (xz,yz)
""",
)

# Source: Cotton, Appendix IIA, S6 table (complex pairs combined)  # from memory
_add(
    "S6",
    COTTON,
    "E 2C3 i 2S6",
    """
Ag | 1 1 1 1 | Rz | x2+y2; z2
Eg | 2 -1 2 -1 | (Rx,Ry) | (x2-y2,xy); (xz,yz)
Au | 1 1 -1 -1 | z |
Eu | 2 -1 -2 1 | (x,y) |
""",
)

# Source: Cotton, Appendix IIA, S8 table (complex pairs combined)  # from memory
_add(
    "S8",
    COTTON,
    "E 2S8 2C4 2S8^3 C2",
    """
A | 1 1 1 1 1 | Rz | x2+y2; z2
B | 1 -1 1 -1 1 | z |
E1 | 2 r2 0 -r2 -2 | (x,y) |
E2 | 2 0 -2 0 2 | | (x2-y2,xy)
E3 | 2 -r2 0 r2 -2 | (Rx,Ry) | (xz,yz)
""",
)

# Source: Cotton, Appendix IIA, T table (complex pair E combined; C3 and C3² merged)
# from memory
_add(
    "T",
    COTTON,
    "E 8C3 3C2",
    """
A | 1 1 1 | | x2+y2+z2
E | 2 -1 2 | | (2z2-x2-y2,x2-y2)
T | 3 0 -1 | (Rx,Ry,Rz); (x,y,z) | (xy,xz,yz)
""",
)

# Source: Cotton, Appendix IIA, Td table  # from memory
_add(
    "Td",
    COTTON,
    "E 8C3 3C2 6S4 6σd",
    """
A1 | 1 1 1 1 1 | | x2+y2+z2
A2 | 1 1 1 -1 -1 | |
E | 2 -1 2 0 0 | | (2z2-x2-y2,x2-y2)
T1 | 3 0 -1 1 -1 | (Rx,Ry,Rz) |
T2 | 3 0 -1 -1 1 | (x,y,z) | (xy,xz,yz)
""",
)

# Source: Cotton, Appendix IIA, Th table (complex pairs combined; C3/C3², S6/S6⁵ merged)
# from memory
_add(
    "Th",
    COTTON,
    "E 8C3 3C2 i 8S6 3σh",
    """
Ag | 1 1 1 1 1 1 | | x2+y2+z2
Eg | 2 -1 2 2 -1 2 | | (2z2-x2-y2,x2-y2)
Tg | 3 0 -1 3 0 -1 | (Rx,Ry,Rz) | (xz,yz,xy)
Au | 1 1 1 -1 -1 -1 | |
Eu | 2 -1 2 -2 1 -2 | |
Tu | 3 0 -1 -3 0 1 | (x,y,z) |
""",
)

# Source: Cotton, Appendix IIA, O table  # from memory
_add(
    "O",
    COTTON,
    "E 6C4 3C2 8C3 6C2",
    """
A1 | 1 1 1 1 1 | | x2+y2+z2
A2 | 1 -1 1 1 -1 | |
E | 2 0 2 -1 0 | | (2z2-x2-y2,x2-y2)
T1 | 3 1 -1 0 -1 | (Rx,Ry,Rz); (x,y,z) |
T2 | 3 -1 -1 0 1 | | (xy,xz,yz)
""",
)

# Source: Cotton, Appendix IIA, Oh table (3C2 is 3C2 = C4²)  # from memory
_add(
    "Oh",
    COTTON,
    "E 8C3 6C2 6C4 3C2 i 6S4 8S6 3σh 6σd",
    """
A1g | 1 1 1 1 1 1 1 1 1 1 | | x2+y2+z2
A2g | 1 1 -1 -1 1 1 -1 1 1 -1 | |
Eg | 2 -1 0 0 2 2 0 -1 2 0 | | (2z2-x2-y2,x2-y2)
T1g | 3 0 -1 1 -1 3 1 0 -1 -1 | (Rx,Ry,Rz) |
T2g | 3 0 1 -1 -1 3 -1 0 -1 1 | | (xz,yz,xy)
A1u | 1 1 1 1 1 -1 -1 -1 -1 -1 | |
A2u | 1 1 -1 -1 1 -1 1 -1 -1 1 | |
Eu | 2 -1 0 0 2 -2 0 1 -2 0 | |
T1u | 3 0 -1 1 -1 -3 -1 0 1 1 | (x,y,z) |
T2u | 3 0 1 -1 -1 -3 1 0 1 -1 | |
""",
)

# Source: Cotton, Appendix IIA, I table  # from memory
_add(
    "I",
    COTTON,
    "E 12C5 12C5^2 20C3 15C2",
    """
A | 1 1 1 1 1 | | x2+y2+z2
T1 | 3 g+ g- 0 -1 | (x,y,z); (Rx,Ry,Rz) |
T2 | 3 g- g+ 0 -1 | |
G | 4 -1 -1 1 0 | |
H | 5 0 0 -1 1 | | (2z2-x2-y2,x2-y2,xy,xz,yz)
""",
)

# Source: Cotton, Appendix IIA, Ih table  # from memory
_add(
    "Ih",
    COTTON,
    "E 12C5 12C5^2 20C3 15C2 i 12S10 12S10^3 20S6 15σ",
    """
Ag | 1 1 1 1 1 1 1 1 1 1 | | x2+y2+z2
T1g | 3 g+ g- 0 -1 3 g- g+ 0 -1 | (Rx,Ry,Rz) |
T2g | 3 g- g+ 0 -1 3 g+ g- 0 -1 | |
Gg | 4 -1 -1 1 0 4 -1 -1 1 0 | |
Hg | 5 0 0 -1 1 5 0 0 -1 1 | | (2z2-x2-y2,x2-y2,xy,xz,yz)
Au | 1 1 1 1 1 -1 -1 -1 -1 -1 | |
T1u | 3 g+ g- 0 -1 -3 -g- -g+ 0 1 | (x,y,z) |
T2u | 3 g- g+ 0 -1 -3 -g+ -g- 0 1 | |
Gu | 4 -1 -1 1 0 -4 1 1 -1 0 | |
Hu | 5 0 0 -1 1 -5 0 0 1 -1 | |
""",
)

# Linear groups: irreps, their order and functions as printed; characters are checked
# against the printed formulas χ(C(φ)) = 2cos(|m|φ) separately.
# Source: Cotton, Appendix IIA, C∞v table  # from memory
LINEAR_PUBLISHED = {
    "C∞v": {
        "Σ+": ("z", "x2+y2", "z2"),
        "Σ-": ("Rz",),
        "Π": ("(x,y)", "(Rx,Ry)", "(xz,yz)"),
        "Δ": ("(x2-y2,xy)",),
        "Φ": (),
    },
    # Source: Cotton, Appendix IIA, D∞h table  # from memory
    "D∞h": {
        "Σg+": ("x2+y2", "z2"),
        "Σg-": ("Rz",),
        "Πg": ("(Rx,Ry)", "(xz,yz)"),
        "Δg": ("(x2-y2,xy)",),
        "Σu+": ("z",),
        "Σu-": (),
        "Πu": ("(x,y)",),
        "Δu": (),
    },
}


def parse_rows(rows):
    """Split the literal rows into (label, characters, functions) triples."""
    out = []
    for line in rows.splitlines():
        label, chars, lin, quad = (part.strip() for part in line.split("|"))
        values = [TOKENS[t] if t in TOKENS else float(t) for t in chars.split()]
        funcs = [f.strip() for f in (lin + ";" + quad).split(";") if f.strip()]
        out.append((label, values, funcs))
    return out
