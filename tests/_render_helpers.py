"""Readers for the exported outputs, written independently of gammatrace.render: they parse
Markdown pipe tables and printed character forms back, and check LaTeX and HTML for
well-formedness, so the tests compare what a reader sees with the JSON numbers."""

from __future__ import annotations

import html.parser
import math
import re
import shutil
import subprocess

_SUPERSCRIPTS = dict(zip("⁰¹²³⁴⁵⁶⁷⁸⁹", "0123456789"))


# --------------------------------------------------------------------------- Markdown


def markdown_tables(text: str) -> list[list[list[str]]]:
    """Every pipe table of a Markdown text: rows of cells (the alignment row dropped),
    Markdown escapes undone."""
    tables, current = [], []
    for line in text.splitlines():
        if line.startswith("|"):
            current.append(line)
            continue
        if current:
            tables.append(current)
            current = []
    if current:
        tables.append(current)
    out = []
    for lines in tables:
        rows = []
        for line in lines:
            # split on pipes that are not escaped
            cells = re.split(r"(?<!\\)\|", line.strip())[1:-1]
            cells = [re.sub(r"\\(.)", r"\1", c.strip()) for c in cells]
            if all(re.fullmatch(r":?-{3,}:?", c) for c in cells):
                continue
            rows.append(cells)
        out.append(rows)
    return out


def ascii_label(printed: str) -> str:
    """A printed class or irrep label back in the package's ASCII: ″ → '', ′ → ', a
    superscript power → ^k."""
    out = printed.replace("″", "''").replace("′", "'")
    return re.sub(
        "[⁰¹²³⁴⁵⁶⁷⁸⁹]+", lambda m: "^" + "".join(_SUPERSCRIPTS[c] for c in m.group()), out
    )


def ascii_function(printed: str) -> str:
    """A printed function back in ASCII: x² → x2."""
    return printed.replace("²", "2")


def character_value(printed: str) -> float:
    """The number a printed character stands for: ``-1``, ``0.291``, ``√2``, ``-√3``,
    ``2cos72°``, ``-2cos144°``, ``2cos(2π/7)``, ``2cos(π/8)``, ``(1+√5)/2``, ``-(1-√5)/2``."""
    s = printed.strip()
    sign = 1.0
    if s.startswith("-"):
        sign, s = -1.0, s[1:]
    if re.fullmatch(r"\d+(\.\d+)?", s):
        return sign * float(s)
    m = re.fullmatch(r"√(\d+)", s)
    if m:
        return sign * math.sqrt(int(m[1]))
    m = re.fullmatch(r"2cos(\d+)°", s)
    if m:
        return sign * 2.0 * math.cos(math.radians(int(m[1])))
    m = re.fullmatch(r"2cos\((\d*)π/(\d+)\)", s)
    if m:
        a = int(m[1]) if m[1] else 1
        return sign * 2.0 * math.cos(a * math.pi / int(m[2]))
    m = re.fullmatch(r"\(1([+-])√5\)/2", s)
    if m:
        return sign * (1.0 + (1.0 if m[1] == "+" else -1.0) * math.sqrt(5.0)) / 2.0
    raise ValueError(f"not a printed character: {printed!r}")


def is_exact(printed: str) -> bool:
    """True for an integer or an exact irrational form (no decimal point)."""
    return "." not in printed


def irrep_sum(printed: str) -> dict[str, int]:
    """``2A1 + E′`` → {"A1": 2, "E'": 1}; ``0`` → {}."""
    if printed.strip() == "0":
        return {}
    out = {}
    for term in printed.split(" + "):
        m = re.fullmatch(r"(\d*)(.+)", term.strip())
        out[ascii_label(m[2])] = int(m[1]) if m[1] else 1
    return out


# ------------------------------------------------------------------------------ LaTeX


def check_latex(src: str) -> int:
    """Assert the LaTeX is ASCII, its braces balance, ``\\begin``/``\\end`` pair up, every
    tabular row has as many cells as its column specification has columns and every cell
    has balanced math; return the number of tabular environments checked."""
    assert src.isascii(), sorted({c for c in src if not c.isascii()})
    bare = re.sub(r"\\[{}$&%#_]", "", src)  # escaped characters are text
    depth = 0
    for ch in bare:
        depth += {"{": 1, "}": -1}.get(ch, 0)
        assert depth >= 0, "a closing brace without its opening one"
    assert depth == 0, "unbalanced braces"
    stack = []
    for kind, name in re.findall(r"\\(begin|end)\{([^}]*)\}", bare):
        if kind == "begin":
            stack.append(name)
        else:
            assert stack and stack.pop() == name, f"\\end{{{name}}} does not close its begin"
    assert stack == [], f"unclosed environments {stack}"
    tabulars = re.findall(r"\\begin\{tabular\}\{([^}]*)\}(.*?)\\end\{tabular\}", bare, re.S)
    for spec, body in tabulars:
        n_cols = len(re.findall(r"[lrc]", spec))
        rows = [r for r in re.split(r"\\\\", body.replace("\\hline", "")) if r.strip()]
        assert rows, "an empty tabular"
        for row in rows:
            cells = row.split("&")
            assert len(cells) == n_cols, (spec, row)
            for c in cells:
                assert c.count("$") % 2 == 0, f"unbalanced math in {c!r}"
    return len(tabulars)


def tex_engine() -> str | None:
    """pdflatex or lualatex when installed, else None."""
    return shutil.which("pdflatex") or shutil.which("lualatex")


def compile_latex(src: str, tmp_path) -> None:
    """Compile a whole document with the engine found; fail with its log on an error."""
    engine = tex_engine()
    path = tmp_path / "out.tex"
    path.write_text(src, encoding="utf-8")
    run = subprocess.run(
        [engine, "-interaction=nonstopmode", "-halt-on-error", path.name],
        cwd=tmp_path,
        capture_output=True,
        text=True,
        timeout=120,
    )
    assert run.returncode == 0, run.stdout[-3000:]
    assert (tmp_path / "out.pdf").exists()


# ------------------------------------------------------------------------------- HTML

VOID = {"br", "hr", "img", "input", "meta", "link", "col", "wbr"}


class HtmlCheck(html.parser.HTMLParser):
    """Tags must close in order; collects the text of every table cell and every tag."""

    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.stack: list[str] = []
        self.tags: list[str] = []
        self.cells: list[str] = []
        self.attrs: list[tuple[str, str | None]] = []
        self._cell: list[str] | None = None
        self.text: list[str] = []

    def handle_starttag(self, tag, attrs):
        self.tags.append(tag)
        self.attrs.extend(attrs)
        if tag not in VOID:
            self.stack.append(tag)
        if tag in ("td", "th"):
            self._cell = []

    def handle_endtag(self, tag):
        assert self.stack and self.stack[-1] == tag, f"</{tag}> closes {self.stack[-1:]}"
        self.stack.pop()
        if tag in ("td", "th"):
            self.cells.append("".join(self._cell))
            self._cell = None

    def handle_data(self, data):
        self.text.append(data)
        if self._cell is not None:
            self._cell.append(data)


def check_html(src: str) -> HtmlCheck:
    """Parse HTML with the standard library's parser; assert it is well formed (tags balance,
    one table at least) and self-contained (no script, stylesheet or class attribute)."""
    p = HtmlCheck()
    p.feed(src)
    p.close()
    assert p.stack == [], f"unclosed tags {p.stack}"
    assert "table" in p.tags
    assert not {"script", "style", "link", "iframe"} & set(p.tags)
    assert all(name == "style" for name, _ in p.attrs), p.attrs
    return p
