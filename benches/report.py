"""Run the benchmark suite and write BENCHMARKS.md (``python -m benches.report``).

Steps, all on this machine in one go:

1. ``pytest benches/ --benchmark-json=benches/results/<stamp>.json`` (Python workloads and their
   baselines, same run, same groups);
2. ``cargo bench --bench lookup_kernel`` (criterion: Rust lookup kernel next to a streaming
   pass), its medians read from ``target/criterion/`` and saved as
   ``benches/results/<stamp>-lookup.json``;
3. when the machine was busy (1-minute load average above the number of cores), the workloads
   marked ``headline`` once more, saved as ``benches/results/<stamp>-rerun.json``;
4. the log–log plot ``benches/results/scaling.png`` and the page ``BENCHMARKS.md``.

``--from STAMP`` skips the runs and rebuilds the plot and the page from recorded results.
"""

from __future__ import annotations

import argparse
import datetime as dt
import json
import os
import platform
import shutil
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
RESULTS = ROOT / "benches" / "results"
PAGE = ROOT / "BENCHMARKS.md"
PLOT = RESULTS / "scaling.png"
NOTES = ROOT / "benches" / "NOTES.md"

# Targets of issue 7.
TARGET_HEADLINE_S = 1.5
TARGET_HEADLINE_RATIO = 30.0
TARGET_KERNEL_RATIO = 5.0
TARGET_BATCH_PER_S = 20_000
GOAL_BATCH_PER_S = 100_000
TARGET_READ_MB_S = 300.0
TARGET_MEMORY_RATIO = 10.0
# Targets of issue 14, part 1: detection against the counting of the same operations.
DETECTION_TARGETS = (
    ("detect benzene", "benzene (12 atoms)", 20e-6, 1),
    ("detect C60", "C60", 300e-6, 1),
    ("detect Ih-2057", "Ih cluster, 2,057 atoms", 3e-3, 1),
    ("detect C1 30 atoms x100", "C1 conformer, 30 atoms (per structure)", 3e-6, 100),
)
TARGET_DETECTION_RATIO = 2.0
# Targets of issue 14, parts 2–4: the per-structure path, the command line, many tiny frames.
TARGET_ANALYZE_OVERHEAD_S = 60e-6  # analyze(...).to_dict() minus the core's detection
PER_STRUCTURE_GROUPS = ("Td", "D3h", "C2v", "C1")  # groups "analyze 30 atoms <name>"
TARGET_CLI_ANALYZE_PER_S = 10_000
TARGET_CLI_SCREEN_PER_S = 40_000
TARGET_CLI_CLUSTER_S = 0.6
TARGET_CLI_CLUSTER_RATIO = 25.0
TARGET_TINY_FRAME_BYTES = 200.0
#: "Before" figures shown next to every run's own. Sources: the text of issue 14 ("issue"),
#: and, marked with their commit, runs of the benches of this page on the code before parts
#: 2–4 (the per-structure rows: benches/test_per_structure.py, run of 2026-12-02 16:26 UTC on
#: gammatrace 2495067, branch bench, 1-minute load 4.1–4.5; the batch row: the recorded run
#: 20261202T155620Z-02aa233; the tiny-frames row: tests/reliability/test_hostile_sizes.py).
BEFORE = {
    # (analyze(...).to_dict(), detection) medians, seconds, at 2495067
    "analyze Td": (339e-6, 29.3e-6),
    "analyze D3h": (313e-6, 17.8e-6),
    "analyze C2v": (277e-6, 12.9e-6),
    "analyze C1": (555e-6, 4.2e-6),
    "analyze issue": "≈ 180–290 µs per analyze(...).to_dict() (water, benzene; issue)",
    "cli analyze": "880/s (issue); 1,908/s at 2495067 (load 4.4)",
    "cli screen": "14,000/s (issue); 10,212/s at 2495067 (load 4.5)",
    "batch": "89,600/s (2 threads, run 20261202T155620Z-02aa233)",
    "cli cluster": "1.6–1.8 s (issue); ≈ 5.7 s on main; 15.9 s at 2495067 (load 5)",
    "tiny frames": "≈ 460–500 B/frame (test_hostile_sizes.py xfail note; 461 B at 2495067)",
}


def _git(*args: str, cwd: Path = ROOT) -> str:
    try:
        return subprocess.run(
            ["git", *args], check=False, cwd=cwd, capture_output=True, text=True, timeout=10
        ).stdout.strip()
    except (OSError, subprocess.SubprocessError):
        return ""


def _load() -> list:
    try:
        return [round(x, 2) for x in os.getloadavg()]
    except OSError:
        return []


def _fail(message: str) -> None:
    sys.exit(f"benches.report: {message}")


def check_dependencies() -> None:
    """Refuse to run, with the command to fix it, when a needed package is missing."""
    missing = []
    for module, package in (
        ("pytest", "pytest"),
        ("pytest_benchmark", "pytest-benchmark"),
        ("matplotlib", "matplotlib"),
        ("pandas", "pandas"),
        ("scipy", "scipy"),
        ("gammatrace", "gammatrace (pip install -e .)"),
    ):
        try:
            __import__(module)
        except ImportError:
            missing.append(package)
    if missing:
        _fail(f"missing {', '.join(missing)}; install with: pip install -e '.[bench]'")


# ------------------------------------------------------------------------------ running
def run_pytest(json_path: Path, extra: list) -> int:
    cmd = [
        sys.executable,
        "-m",
        "pytest",
        "benches/",
        "-p",
        "no:cacheprovider",
        f"--benchmark-json={json_path}",
        "--benchmark-columns=median,min,max,rounds",
        "--benchmark-sort=name",
        *extra,
    ]
    print("+", " ".join(cmd), flush=True)
    return subprocess.run(cmd, check=False, cwd=ROOT).returncode


KERNEL_OPS = ("C2", "C3", "C5", "i")
KERNEL_TOL = 0.01  # TOL in benches/lookup_kernel.rs


def kernel_rows(criterion_dir: Path) -> list:
    """Rows of the lookup-kernel table from criterion's medians (ns per atom), each id
    ``lookup_{threads}t/{kind}/{n_atoms}`` as written by benches/lookup_kernel.rs."""
    med: dict = {}
    for est in sorted(criterion_dir.glob("lookup_*t/*/*/new/estimates.json")):
        meta = json.loads((est.parent / "benchmark.json").read_text())
        threads = int(meta["group_id"].removeprefix("lookup_").removesuffix("t"))
        n = int(meta["value_str"])
        ns = json.loads(est.read_text())["median"]["point_estimate"]
        med[(threads, n, meta["function_id"])] = ns / n
    rows = []
    for threads, n in sorted({(t, n) for t, n, _ in med}):
        for op in KERNEL_OPS:
            keys = [f"map_atoms_{op}", "stream_sum", f"stream_transform_{op}", "grid_build"]
            vals = [med.get((threads, n, k)) for k in keys]
            if None in vals:
                continue
            rows.append(
                {
                    "n_atoms": n,
                    "threads": threads,
                    "op": op,
                    "ok": True,  # the bench checks every mapping before timing it
                    "map_ns_per_atom": vals[0],
                    "stream_sum_ns_per_atom": vals[1],
                    "stream_transform_ns_per_atom": vals[2],
                    "grid_build_ns_per_atom": vals[3],
                }
            )
    return rows


def run_cargo(json_path: Path, repeats: int) -> dict | None:
    if shutil.which("cargo") is None:
        print("cargo not found: the Rust micro-benchmark is left out", flush=True)
        return None
    samples = max(10, repeats)
    cmd = ["cargo", "bench", "--bench", "lookup_kernel"]
    print("+", " ".join(cmd), f"(LOOKUP_KERNEL_SAMPLES={samples})", flush=True)
    target = Path(os.environ.get("CARGO_TARGET_DIR", ROOT / "target"))
    for old in (target / "criterion").glob("lookup_*t"):
        shutil.rmtree(old)  # only this run's sizes go into the table
    load_before = _load()
    env = {**os.environ, "LOOKUP_KERNEL_SAMPLES": str(samples)}
    out = subprocess.run(cmd, check=False, cwd=ROOT, capture_output=True, text=True, env=env)
    sys.stdout.write(out.stdout)
    if out.returncode != 0:
        sys.stderr.write(out.stderr)
        print("the Rust micro-benchmark failed: left out of the page", flush=True)
        return None
    rows = kernel_rows(target / "criterion")
    if not rows:
        return None
    data = {"repeats": samples, "tol": KERNEL_TOL, "rows": rows}
    rustc = subprocess.run(
        ["rustc", "--version"], check=False, capture_output=True, text=True
    ).stdout.strip()
    data.update(
        {
            "datetime": dt.datetime.now(dt.timezone.utc).isoformat(timespec="seconds"),
            "commit": _git("rev-parse", "HEAD"),
            "machine": _machine(),
            "rustc": rustc,
            "loadavg_before": load_before,
            "loadavg_after": _load(),
        }
    )
    json_path.write_text(json.dumps(data, indent=1) + "\n")
    return data


def _machine() -> dict:
    cpu = platform.processor()
    try:
        for line in Path("/proc/cpuinfo").read_text().splitlines():
            if line.startswith("model name"):
                cpu = line.split(":", 1)[1].strip()
                break
    except OSError:
        pass
    return {
        "node": platform.node(),
        "cpu": cpu,
        "n_cores": os.cpu_count(),
        "system": platform.platform(),
    }


# ------------------------------------------------------------------------------ reading
def load_benchmarks(path: Path) -> dict:
    """``{(group, name): record}`` plus the raw JSON under key None."""
    data = json.loads(path.read_text())
    out = {(b["group"], b["name"]): b for b in data["benchmarks"]}
    out[None] = data
    return out


def _rows(bench: dict):
    """``((group, name), record)`` pairs (the raw JSON under key None left out)."""
    return ((k, b) for k, b in bench.items() if k is not None)


def median(b: dict | None) -> float | None:
    return None if b is None else b["stats"]["median"]


def fmt_s(x: float | None) -> str:
    if x is None:
        return "—"
    if x >= 1:
        return f"{x:.2f} s"
    if x >= 1e-3:
        return f"{x * 1e3:.1f} ms"
    return f"{x * 1e6:.0f} µs"


def fmt_ratio(x: float | None) -> str:
    return "—" if x is None else f"{x:.1f}×"


def verdict(ok: bool | None) -> str:
    return "n/a" if ok is None else ("met" if ok else "**missed**")


# ------------------------------------------------------------------------------ plot
def make_plot(bench: dict, path: Path) -> None:
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    fig, axes = plt.subplots(1, 2, figsize=(10, 4.2), sharey=True)
    styles = {
        "ours": ("o-", "gammatrace: detection + Γ_3N + Γ_vib"),
        "ours-detection": ("d-", "gammatrace: detection only"),
        "ours-counting": ("s--", "gammatrace: counting only (operations given)"),
        "kdtree": ("^-", "baseline (b) numpy + cKDTree (operations given)"),
        "dense": ("x", "baseline (a) dense 3N×3N traces (operations given)"),
    }
    for ax, family in zip(axes, ("Ih", "Oh")):
        for name, (style, label) in styles.items():
            pts = sorted(
                (b["extra_info"]["n_atoms"], b["stats"]["median"])
                for (g, n), b in _rows(bench)
                if g is not None and n == name and g.startswith(f"{family} 1e")
            )
            if pts:
                xs, ys = zip(*pts)
                ax.loglog(xs, ys, style, label=label, markersize=6)
        cli = bench.get((f"cli {family} 1e6", "ours-analyze-json"))
        if cli is not None:
            ax.loglog(
                [cli["extra_info"]["n_atoms"]],
                [cli["stats"]["median"]],
                "*",
                label="gammatrace analyze --format json (command line, end to end)",
                markersize=10,
            )
        ax.set_title(
            f"{family} clusters ({'Mackay icosahedra' if family == 'Ih' else 'fcc spheres'})"
        )
        ax.set_xlabel("number of atoms")
        ax.grid(True, which="both", alpha=0.3)
    axes[0].set_ylabel("median wall time (s)")
    axes[0].legend(fontsize=7, loc="lower right")
    fig.tight_layout()
    fig.savefig(path, dpi=90)
    plt.close(fig)


# ------------------------------------------------------------------------------ page
def group_table(bench: dict, group: str, references: tuple = ()) -> list:
    """Rows of one group, fastest first, with baseline / reference ratios (same run)."""
    rows = [(n, b) for (g, n), b in _rows(bench) if g == group]
    if not rows:
        return []
    refs = [(r, median(bench.get((group, r)))) for r in references]
    refs = [(r, m) for r, m in refs if m]
    head = "| workload | median | min | rounds | load (1 min) |" + "".join(
        f" baseline / {r} |" for r, _ in refs
    )
    lines = [head, "|---" * (5 + len(refs)) + "|"]
    for name, b in sorted(rows, key=lambda r: r[1]["stats"]["median"]):
        st = b["stats"]
        load = b.get("extra_info", {}).get("loadavg", [None])
        ratios = "".join(
            f" {fmt_ratio(None if name.startswith('ours') else st['median'] / m)} |"
            for _, m in refs
        )
        lines.append(
            f"| {name} | {fmt_s(st['median'])} | {fmt_s(st['min'])} | {st['rounds']} | "
            f"{load[0] if load else '—'} |{ratios}"
        )
    return lines


def _best_batch(bench: dict) -> str | None:
    rows = [
        (b["stats"]["median"], n)
        for (g, n), b in _rows(bench)
        if g == "batch 1e4 conformers" and n.startswith("ours-threads")
    ]
    return min(rows)[1] if rows else None


def kernel_summary(rust: dict | None) -> tuple:
    """(worst map/R·x ratio, median ratio, n_atoms) at the largest size, one thread."""
    if not rust:
        return None, None, None
    rows = [r for r in rust["rows"] if r["threads"] == 1]
    if not rows:
        return None, None, None
    n = max(r["n_atoms"] for r in rows)
    ratios = sorted(
        r["map_ns_per_atom"] / r["stream_transform_ns_per_atom"] for r in rows if r["n_atoms"] == n
    )
    return ratios[-1], ratios[len(ratios) // 2], n


def headline_numbers(bench: dict) -> dict:
    ours = median(bench.get(("Ih 1e6", "ours")))
    kd = median(bench.get(("Ih 1e6", "kdtree")))
    batch = [
        b["extra_info"].get("per_second")
        for (g, n), b in _rows(bench)
        if g == "batch 1e4 conformers" and n.startswith("ours-threads")
    ]
    read = bench.get(("read 50 MB xyz", "ours"))
    mem = bench.get(("peak memory", "Ih-1e6-ours"))
    return {
        "ours": ours,
        "ratio": kd / ours if ours and kd else None,
        "batch": max(batch) if batch else None,
        "read": read["extra_info"]["mb_per_s"] if read else None,
        "memory": mem["extra_info"]["ratio_to_coordinates"] if mem else None,
        "memory_mb": mem["extra_info"]["peak_extra_bytes"] / 1e6 if mem else None,
    }


def targets_table(runs: list, rust: dict | None) -> list:
    header = "| target | " + " | ".join(label for label, _ in runs) + " | verdict |"
    lines = [header, "|---" * (len(runs) + 2) + "|"]
    nums = [headline_numbers(b) for _, b in runs]

    def best(key, better):
        vals = [n[key] for n in nums if n[key] is not None]
        return better(vals) if vals else None

    def row(title, key, fmt, ok):
        cells = " | ".join(fmt(n[key]) if n[key] is not None else "—" for n in nums)
        lines.append(f"| {title} | {cells} | {ok} |")

    t = best("ours", min)
    row(
        f"Ih 10⁶ atoms, detection + Γ_3N + Γ_vib ≤ {TARGET_HEADLINE_S} s",
        "ours",
        fmt_s,
        verdict(None if t is None else t <= TARGET_HEADLINE_S),
    )
    r = best("ratio", max)
    row(
        f"… ≥ {TARGET_HEADLINE_RATIO:.0f}× faster than baseline (b)",
        "ratio",
        fmt_ratio,
        verdict(None if r is None else r >= TARGET_HEADLINE_RATIO),
    )
    b = best("batch", max)
    row(
        f"batch ≥ {TARGET_BATCH_PER_S:,} conformers/s (goal {GOAL_BATCH_PER_S:,})",
        "batch",
        lambda x: f"{x:,.0f}/s",
        verdict(None if b is None else b >= TARGET_BATCH_PER_S)
        + (" (goal met)" if b and b >= GOAL_BATCH_PER_S else ""),
    )
    rd = best("read", max)
    row(
        f"reading ≥ {TARGET_READ_MB_S:.0f} MB/s",
        "read",
        lambda x: f"{x:.0f} MB/s",
        verdict(None if rd is None else rd >= TARGET_READ_MB_S),
    )
    m = best("memory", min)
    row(
        f"peak memory, 10⁶ atoms ≤ {TARGET_MEMORY_RATIO:.0f}× the coordinates",
        "memory",
        lambda x: f"{x:.1f}×",
        verdict(None if m is None else m <= TARGET_MEMORY_RATIO),
    )
    worst, mid, n = kernel_summary(rust)
    cells = " | ".join(
        (f"{mid:.0f}× (worst op {worst:.0f}×)" if mid is not None and i == 0 else "—")
        for i in range(len(runs))
    )
    lines.append(
        f"| lookup kernel within {TARGET_KERNEL_RATIO:.0f}× of a streaming pass "
        f"({n or '—'} atoms, 1 thread, median over ops) | {cells} | "
        f"{verdict(None if mid is None else mid <= TARGET_KERNEL_RATIO)} |"
    )
    return lines


def detection_table(bench: dict) -> list:
    """Detection next to counting of the same operations, same run (issue 14, part 1)."""
    lines = [
        "| workload | detection | counting | detection / counting | target | verdict |",
        "|---|---|---|---|---|---|",
    ]

    def cell(group, name, per):
        m = median(bench.get((group, name)))
        return None if m is None else m / per

    def fmt_t(x):  # with a decimal below 100 µs
        return f"{x * 1e6:.1f} µs" if x < 1e-4 else fmt_s(x)

    for group, title, limit, per in DETECTION_TARGETS:
        det, cnt = cell(group, "ours-detection", per), cell(group, "ours-counting", per)
        if det is None or cnt is None:
            continue
        lines.append(
            f"| {title} | {fmt_t(det)} | {fmt_t(cnt)} | {fmt_ratio(det / cnt)} | "
            f"≤ {fmt_t(limit)} | {verdict(det <= limit)} |"
        )
        batch = cell(group, "ours-detection-batch", per)
        if batch is not None:
            lines.append(
                f"| … through the batch call, one thread | {fmt_t(batch)} | | | "
                f"≤ {fmt_t(limit)} | {verdict(batch <= limit)} |"
            )
    for family in ("Ih", "Oh"):
        for k in (3, 4, 5, 6):
            g = f"{family} 1e{k}"
            det = median(bench.get((g, "ours-detection")))
            cnt = median(bench.get((g, "ours-counting")))
            if det is None or cnt is None:
                continue
            n = bench[(g, "ours-detection")]["extra_info"]["n_atoms"]
            lines.append(
                f"| {family} cluster, {n:,} atoms | {fmt_t(det)} | {fmt_t(cnt)} | "
                f"{fmt_ratio(det / cnt)} | ≤ {TARGET_DETECTION_RATIO:.0f}× counting | "
                f"{verdict(det / cnt <= TARGET_DETECTION_RATIO)} |"
            )
    return lines if len(lines) > 2 else ["(not run)"]


def _per_s(x: float | None) -> str:
    return "—" if x is None else f"{x:,.0f}/s"


def _fmt_us(x: float | None) -> str:
    return "—" if x is None else f"{x * 1e6:.0f} µs"


def per_structure_table(runs: list) -> list:
    """Targets of issue 14, parts 2–4, with the "before" figures and same-run references.

    ``runs``: ``[(label, bench), ...]``, the main run first (references come from it); a
    target's verdict takes the better of the runs that have it.
    """
    labels = [label for label, _ in runs]
    lines = [
        "| target | before | " + " | ".join(labels) + " | reference (same run) | verdict |",
        "|---" * (4 + len(runs)) + "|",
    ]
    main = runs[0][1]

    def med(bench, group, name):
        return median(bench.get((group, name)))

    def row(title, before, values, fmt, reference, ok):
        cells = " | ".join(fmt(v) for v in values)
        lines.append(f"| {title} | {before} | {cells} | {reference} | {verdict(ok)} |")

    # 2a: the per-structure path above detection
    for name in PER_STRUCTURE_GROUPS:
        g = f"analyze 30 atoms {name}"
        diffs = []
        for _, bench in runs:
            full, det = med(bench, g, "ours-analyze-to-dict"), med(bench, g, "ours-detection")
            diffs.append(None if full is None or det is None else full - det)
        if all(d is None for d in diffs):
            continue
        full, det = med(main, g, "ours-analyze-to-dict"), med(main, g, "ours-detection")
        b_full, b_det = BEFORE[f"analyze {name}"]
        got = [d for d in diffs if d is not None]
        row(
            f"`analyze(symbols, positions).to_dict()` − detection, 30 atoms {name}, "
            f"≤ {_fmt_us(TARGET_ANALYZE_OVERHEAD_S)}",
            f"{_fmt_us(b_full - b_det)} ({_fmt_us(b_full)} − {_fmt_us(b_det)})",
            diffs,
            _fmt_us,
            "—" if full is None else f"to_dict {_fmt_us(full)}, detection {det * 1e6:.1f} µs",
            min(got) <= TARGET_ANALYZE_OVERHEAD_S,
        )

    # 2b, 2c: the command line on the conformer ensemble
    g = "cli 20k conformers"
    start, imp = med(main, g, "python-startup"), med(main, g, "cli-import")
    startup = (
        "—"
        if start is None or imp is None
        else f"bare interpreter {fmt_s(start)}, `import gammatrace.cli` {fmt_s(imp)}"
    )
    for name, title, limit, before in (
        (
            "ours-analyze-json",
            "`gammatrace analyze --format json`, 20,000 conformers, end to end",
            TARGET_CLI_ANALYZE_PER_S,
            BEFORE["cli analyze"],
        ),
        (
            "ours-screen",
            "`gammatrace screen` to JSON Lines, same file, end to end",
            TARGET_CLI_SCREEN_PER_S,
            BEFORE["cli screen"],
        ),
    ):
        vals = [
            (bench.get((g, name)) or {}).get("extra_info", {}).get("per_second")
            for _, bench in runs
        ]
        if all(v is None for v in vals):
            continue
        row(
            f"{title} ≥ {limit:,}/s",
            before,
            vals,
            _per_s,
            startup,
            max(v for v in vals if v is not None) >= limit,
        )

    # 2d: the batch API
    vals = [headline_numbers(bench)["batch"] for _, bench in runs]
    if any(v is not None for v in vals):
        loop = (main.get(("batch 1e4 conformers", "kdtree-loop")) or {}).get("extra_info", {})
        row(
            f"batch API, 10⁴ conformers, best of 1 and {os.cpu_count()} threads "
            f"≥ {GOAL_BATCH_PER_S:,}/s",
            BEFORE["batch"],
            vals,
            _per_s,
            f"KD-tree loop {_per_s(loop.get('per_second'))}",
            max(v for v in vals if v is not None) >= GOAL_BATCH_PER_S,
        )

    # 3: the 10⁶-atom cluster from the command line
    g = "cli Ih 1e6"
    times = [med(bench, g, "ours-analyze-json") for _, bench in runs]
    if any(t is not None for t in times):
        kd = med(main, g, "kdtree")
        row(
            f"`gammatrace analyze FILE --format json`, Ih 1,025,235 atoms, end to end "
            f"≤ {TARGET_CLI_CLUSTER_S} s",
            BEFORE["cli cluster"],
            times,
            fmt_s,
            f"numpy.loadtxt + cKDTree (b) {fmt_s(kd)}",
            min(t for t in times if t is not None) <= TARGET_CLI_CLUSTER_S,
        )
        ratios = [
            None if t is None or (k := med(bench, g, "kdtree")) is None else k / t
            for t, (_, bench) in zip(times, runs)
        ]
        got = [r for r in ratios if r is not None]
        row(
            f"… ≥ {TARGET_CLI_CLUSTER_RATIO:.0f}× faster than that baseline",
            "—",
            ratios,
            fmt_ratio,
            "baseline given the operations, untimed",
            max(got) >= TARGET_CLI_CLUSTER_RATIO if got else None,
        )

    # 4: many tiny frames
    vals = [
        (bench.get(("peak memory", "tiny-frames-1e6-read")) or {})
        .get("extra_info", {})
        .get("bytes_per_frame")
        for _, bench in runs
    ]
    if any(v is not None for v in vals):
        row(
            f"`read_xyz_raw`, 10⁶ one-atom frames: peak memory ≤ "
            f"{TARGET_TINY_FRAME_BYTES:.0f} B per frame",
            BEFORE["tiny frames"],
            vals,
            lambda x: "—" if x is None else f"{x:.0f} B",
            "file: 12 B per frame; coordinates + number: 32 B",
            min(v for v in vals if v is not None) <= TARGET_TINY_FRAME_BYTES,
        )
    return lines if len(lines) > 2 else ["(not run)"]


def rust_table(rust: dict | None) -> list:
    if not rust:
        return ["(not run: cargo missing or the micro-benchmark failed)"]
    lines = [
        (
            f"`cargo bench --bench lookup_kernel` ({rust.get('rustc', '')}, criterion median of "
            f"{rust['repeats']} samples, tol {rust['tol']} Å, load {rust.get('loadavg_before')} → "
            f"{rust.get('loadavg_after')}). ns per atom; *R·x* = read every coordinate, rotate, "
            "write (the streaming floor); *sum* = read only; *grid* = building the cell grid once."
        ),
        "",
        (
            "| atoms | threads | op | map ns/atom | R·x ns/atom | sum ns/atom | grid ns/atom "
            "| map / R·x |"
        ),
        "|---|---|---|---|---|---|---|---|",
    ]
    for r in rust["rows"]:
        lines.append(
            f"| {r['n_atoms']:,} | {r['threads']} | {r['op']} | {r['map_ns_per_atom']:.1f} | "
            f"{r['stream_transform_ns_per_atom']:.2f} | {r['stream_sum_ns_per_atom']:.2f} | "
            f"{r['grid_build_ns_per_atom']:.1f} | "
            f"{r['map_ns_per_atom'] / r['stream_transform_ns_per_atom']:.0f}× |"
        )
    return lines


def write_page(stamp: str, bench: dict, rerun: dict | None, rust: dict | None) -> None:
    data = bench[None]
    mi = data["machine_info"]
    ci = data.get("commit_info", {})
    v = mi.get("versions", {})
    runs = [("run", bench)] + ([("re-run (headline)", rerun)] if rerun else [])
    out = [
        "# Benchmarks",
        "",
        "Generated by `bash scripts/bench.sh` (= `python -m benches.report`); do not edit by hand.",
        f"Recorded results: `benches/results/{stamp}*.json`. Plot: `benches/results/scaling.png`.",
        "",
        "## Machine and versions",
        "",
        f"- date: {data['datetime']}",
        (
            f"- CPU: {mi.get('cpu_model')} ({mi.get('n_cores')} cores), "
            f"memory {mi.get('mem_total_kb', 0) / 1e6:.1f} GB, "
            f"{mi.get('system')} {mi.get('release')}"
        ),
        f"- Python {mi.get('python_version')} ({mi.get('python_implementation')}), "
        f"numpy {v.get('numpy')}, scipy {v.get('scipy')}, pandas {v.get('pandas')}"
        + (f", {rust['rustc']}" if rust else ""),
        f"- gammatrace {v.get('gammatrace')} from `{mi.get('gammatrace_path')}` at commit "
        f"`{mi.get('gammatrace_commit', '')[:12]}`"
        + (" (uncommitted changes)" if mi.get("gammatrace_dirty") else "")
        + f"; suite at commit `{ci.get('id', '')[:12]}`"
        + (" (uncommitted changes)" if ci.get("dirty") else ""),
        (
            f"- load average (1, 5, 15 min): {mi.get('loadavg_at_start')} at the start, "
            f"{data.get('loadavg_at_end')} at the end. The machine is shared; every row below "
            "carries the 1-minute load when it finished."
        ),
        "",
        "## Targets (issue 7)",
        "",
        *targets_table(runs, rust),
        "",
        (
            "Verdicts use the better of the two runs when the headline was re-run (a busy "
            "shared machine only ever slows a run down). Ratios divide the baseline's median "
            "by ours from the same run. The baselines are GIVEN the symmetry operations (found "
            "by gammatrace, untimed): they only map atoms and count, while *ours* also finds "
            "the point group from the bare coordinates. *ours-counting* is the core's count of "
            "unshifted atoms for the same given operations (see the notes)."
        ),
        "",
        "## Detection next to counting (issue 14, part 1)",
        "",
        (
            "*detection* is `_core.find_point_group` from the bare coordinates (every operation "
            "verified against all atoms up to the verify-all limit; the record's numpy arrays, "
            "the permutations among them, are made when first read, and these rows read none); "
            "*counting* is `_core.count_unshifted` for the operations it found, in the same run. "
            "`cargo bench --bench detect_kernel` times the same pairs in the core alone."
        ),
        "",
        *detection_table(bench),
        "",
        "## Per-structure path, command line, tiny frames (issue 14, parts 2–4)",
        "",
        (
            "*before*: figures from the text of issue 14 and from runs of these benches on the "
            "code before parts 2–4 (commit named; constants `BEFORE` in benches/report.py). "
            "The command-line rows run one fresh interpreter per round (start-up, imports, "
            "reading, analysis, writing), with `PYTHONPATH` set to the checkout under test; the "
            "per-structure rows subtract the median of the core's detection "
            "(`_core.find_point_group` with `analyze`'s arguments) from that of "
            "`analyze(symbols, positions).to_dict()`, both from the same run. Verdicts take the "
            "better run."
        ),
        "",
        *per_structure_table(runs),
        "",
        "## Scaling",
        "",
        "![time against number of atoms](benches/results/scaling.png)",
        "",
    ]
    for family in ("Ih", "Oh"):
        for k in (3, 4, 5, 6):
            g = f"{family} 1e{k}"
            rows = group_table(bench, g, ("ours", "ours-counting"))
            if rows:
                n = next(b["extra_info"]["n_atoms"] for (gg, _), b in _rows(bench) if gg == g)
                out += [f"### {g} ({n:,} atoms)", "", *rows, ""]
    for name in PER_STRUCTURE_GROUPS:
        g = f"analyze 30 atoms {name}"
        rows = group_table(bench, g)
        if rows:
            out += [f"### {g}", "", *rows, ""]
    for title, g, ref in (
        (
            "Command line: 20,000 conformers (one process per round)",
            "cli 20k conformers",
            None,
        ),
        ("Command line: Ih cluster, 1,025,235 atoms", "cli Ih 1e6", "ours-analyze-json"),
        ("Batch: 10⁴ conformers of a 30-atom molecule", "batch 1e4 conformers", _best_batch(bench)),
        ("Reading a ~50 MB multi-frame XYZ file", "read 50 MB xyz", "ours"),
        ("Reading 10⁶ one-atom frames (fresh process)", "read 1e6 tiny frames", None),
        ("Symmetry-adapted basis and mode labelling", "basis", None),
    ):
        rows = group_table(bench, g, (ref,) if ref else ())
        out += [f"### {title}", ""]
        if not rows:
            out += ["Not run (deselected or skipped: see the pytest output).", ""]
            continue
        out += [*rows, ""]
        extra = []
        for (gg, name), b in sorted(_rows(bench), key=lambda kv: str(kv[0])):
            if gg != g:
                continue
            e = b["extra_info"]
            if "per_second" in e:
                extra.append(f"- {name}: {e['per_second']:,.0f} structures/s")
            if "peak_bytes_per_frame" in e:
                extra.append(
                    f"- {name}: peak {e['peak_bytes_per_frame']:.0f} bytes per frame "
                    f"(target ≤ {e['target_bytes_per_frame']}; {e['n_frames']:,} frames)"
                )
            if "mb_per_s" in e:
                extra.append(
                    f"- {name}: {e['mb_per_s']:.0f} MB/s ({e['file_bytes'] / 1e6:.1f} MB, "
                    f"{e['n_frames']:,} frames)"
                )
        if extra:
            out += [*extra, ""]
    mem = [(n, b["extra_info"]) for (g, n), b in _rows(bench) if g == "peak memory"]
    if mem:
        out += [
            "### Peak memory (fresh process, VmHWM after − VmRSS before)",
            "",
            "| workload | atoms | coordinates | peak extra | ratio | per frame |",
            "|---|---|---|---|---|---|",
        ]
        for name, e in sorted(mem):
            per_frame = e.get("bytes_per_frame")
            out.append(
                f"| {name} | {e['n_atoms']:,} | {e['coordinate_bytes'] / 1e6:.1f} MB | "
                f"{e['peak_extra_bytes'] / 1e6:.1f} MB | {e['ratio_to_coordinates']:.1f}× | "
                f"{'—' if per_frame is None else f'{per_frame:.0f} B'} |"
            )
        out.append("")
    out += ["## Lookup kernel (Rust)", "", *rust_table(rust), ""]
    if rerun:
        out += ["## Re-run of the headline workloads (the machine was busy)", ""]
        for g in sorted({g for (g, _), _b in _rows(rerun)}):
            rows = group_table(rerun, g, ("ours", "ours-counting") if g[:2] in ("Ih", "Oh") else ())
            out += [f"### {g}", "", *rows, ""]
    if NOTES.exists():
        out += [NOTES.read_text().strip(), ""]
    PAGE.write_text("\n".join(out))
    print(f"wrote {PAGE.relative_to(ROOT)}", flush=True)


# ------------------------------------------------------------------------------ main
def main(argv=None) -> None:
    p = argparse.ArgumentParser(description="Run the benchmark suite and write BENCHMARKS.md.")
    p.add_argument("--from", dest="stamp", help="rebuild the page from recorded results STAMP")
    p.add_argument(
        "--rust-repeats", type=int, default=10, help="criterion samples per kernel benchmark (≥ 10)"
    )
    p.add_argument("--no-rerun", action="store_true", help="never re-run the headline workloads")
    p.add_argument("pytest_args", nargs="*", help="extra arguments for pytest (e.g. -k 1e3)")
    args = p.parse_args(argv)
    check_dependencies()
    RESULTS.mkdir(parents=True, exist_ok=True)
    if args.stamp:
        stamp = args.stamp
    else:
        now = dt.datetime.now(dt.timezone.utc).strftime("%Y%m%dT%H%M%SZ")
        stamp = f"{now}-{_git('rev-parse', '--short', 'HEAD') or 'nogit'}"
        rc = run_pytest(RESULTS / f"{stamp}.json", args.pytest_args)
        if rc not in (0, 5):
            _fail(f"pytest exited with status {rc}; results kept in benches/results/{stamp}.json")
        run_cargo(RESULTS / f"{stamp}-lookup.json", args.rust_repeats)
        load = _load()
        if not args.no_rerun and load and load[0] > (os.cpu_count() or 1):
            print(f"load average {load} above the core count: re-running the headline", flush=True)
            run_pytest(RESULTS / f"{stamp}-rerun.json", ["-m", "headline", *args.pytest_args])
    bench = load_benchmarks(RESULTS / f"{stamp}.json")
    rerun_path = RESULTS / f"{stamp}-rerun.json"
    rerun = load_benchmarks(rerun_path) if rerun_path.exists() else None
    rust_path = RESULTS / f"{stamp}-lookup.json"
    rust = json.loads(rust_path.read_text()) if rust_path.exists() else None
    make_plot(bench, PLOT)
    write_page(stamp, bench, rerun, rust)


if __name__ == "__main__":
    main()
