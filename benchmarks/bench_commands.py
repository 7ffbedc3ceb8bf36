"""Benchmark: CPU time of whole ``ptaconstrain`` processes against an import floor.

The floor is a process that only imports what any command needs anyway
(``python -c "import numpy, astropy.table, matplotlib.figure"``).  Against it,
in the same run and on the same machine:

- ``ptaconstrain exclude`` for one host with one PNG (shipped synthetic limit,
  default grid), target <= 1.3 x the floor;
- ``ptaconstrain demo`` (every table, its figures), target <= 4 x the floor.

A command started from the shell skips the interpreter's final garbage
collections (``cli._process_ends`` freezes the heap as the process ends); the
floor pays them (~0.17 s), so a second floor that skips them too
(``gc.freeze()`` after the imports) is timed as well and both ratios printed.

CPU time is user + system of the process and its children (on 4 or more cores
the demo draws its figures in worker processes), the best of several
interleaved runs, so it is much less sensitive to the machine's load than wall
time, which is printed as well.

The package is timed as installed: each source tree is copied to a temporary
directory and compiled to bytecode there (``compileall``, as ``pip install``
does), so that no process compiles the package's modules from source, which a
checkout run with ``PYTHONDONTWRITEBYTECODE=1`` (as on the CI machines) does
every time while the floor's libraries come compiled; ``--source`` times the
source trees as they are instead.

Run from the repository root:  python benchmarks/bench_commands.py [--repeat N]
[--compare OTHER/src] [--source] (``--compare`` times an older tree's commands
in the same run).
"""

import argparse
import compileall
import os
import shutil
import sys
import tempfile
from pathlib import Path

from benchtools import machine_line, process_times

ROOT = Path(__file__).resolve().parents[1]
FROZEN_FLOOR = "import floor, no final collection"


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=3, help="runs per command (best kept)")
    parser.add_argument(
        "--compare",
        metavar="SRC",
        default=None,
        help="also time the commands of another source tree (e.g. an older "
        "checkout's src/), in the same interleaved rounds",
    )
    parser.add_argument(
        "--source",
        action="store_true",
        help="time the source trees as they are (modules compiled by each process "
        "when bytecode is not written) instead of bytecode-compiled copies",
    )
    args = parser.parse_args()
    py = sys.executable
    cli = [py, "-m", "ptaconstrain.cli"]
    curve = str(ROOT / "src" / "ptaconstrain" / "data" / "synthetic_h0_limit.ecsv")
    trees = {"": ROOT / "src"}
    if args.compare:
        trees[" (compared)"] = Path(args.compare).resolve()
    with tempfile.TemporaryDirectory() as tmp:
        if not args.source:
            trees = {
                tag: _installed_copy(src, Path(tmp) / f"tree{i}")
                for i, (tag, src) in enumerate(trees.items())
            }
        how = (
            "source trees as they are" if args.source else "bytecode-compiled copies (as installed)"
        )
        print(f"bench_commands: {machine_line()}; best of {args.repeat} runs each; {how}")
        commands = {
            "import floor": (
                [py, "-c", "import numpy, astropy.table, matplotlib.figure"],
                None,
                trees[""],
            ),
            # the floor without the interpreter's final collections, which the
            # commands skip (cli._process_ends): the stricter comparison
            FROZEN_FLOOR: (
                [py, "-c", "import numpy, astropy.table, matplotlib.figure, gc; gc.freeze()"],
                None,
                trees[""],
            ),
        }
        for tag, src in trees.items():
            out = Path(tmp) / f"out{len(commands)}"
            commands[f"exclude, one PNG{tag}"] = (
                cli
                + [
                    "exclude",
                    "--mass",
                    "2e10",
                    "--distance",
                    "100",
                    "--curve",
                    curve,
                    "--format",
                    "png",
                    "--out",
                    str(out / "exclude"),
                    "--overwrite",
                ],
                1.3,
                src,
            )
            commands[f"demo{tag}"] = (
                cli + ["demo", "--out", str(out / "demo"), "--overwrite"],
                4.0,
                src,
            )
        # interleaved rounds, so that every command sees the same spread of machine load
        best = {k: (float("inf"), float("inf")) for k in commands}
        for _ in range(args.repeat):
            for key, (cmd, _target, src) in commands.items():
                env = dict(os.environ)
                env["PYTHONPATH"] = os.pathsep.join(
                    [str(src)] + [p for p in env.get("PYTHONPATH", "").split(os.pathsep) if p]
                )
                wall, cpu = process_times(cmd, 1, env)
                best[key] = (min(best[key][0], wall), min(best[key][1], cpu))
    floor, frozen = best["import floor"], best[FROZEN_FLOOR]
    rows = [(key, best[key], target) for key, (_c, target, _s) in commands.items()]
    print(
        f"{'process':<36} {'wall s':>7} {'CPU s':>7} {'CPU / floor':>12} "
        f"{'/ frozen floor':>15}  target (against the floor)"
    )
    for name, (wall, cpu), target in rows:
        ratio = cpu / floor[1]
        verdict = (
            "" if target is None else (f"<= {target:g}: {'met' if ratio <= target else 'NOT met'}")
        )
        print(f"{name:<36} {wall:7.2f} {cpu:7.2f} {ratio:12.2f} {cpu / frozen[1]:15.2f}  {verdict}")


def _installed_copy(src, dest):
    """``src``/ptaconstrain copied into ``dest`` and compiled to bytecode; returns ``dest``."""
    shutil.copytree(
        Path(src) / "ptaconstrain",
        dest / "ptaconstrain",
        ignore=shutil.ignore_patterns("__pycache__"),
    )
    if not compileall.compile_dir(dest / "ptaconstrain", quiet=1):
        raise SystemExit(f"bench_commands: {src} does not compile")
    return dest


if __name__ == "__main__":
    main()
