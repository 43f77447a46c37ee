"""Draw gainshape's wings and the imports between them, from the code (``make docs``).

Run as ``python docs/wings.py OUT.svg``; ``docs/conf.py`` calls :func:`write_picture`.
The wings and their order are read from ``tests/test_init.py`` (the rules the
suite enforces), the imports from the source files, so the picture cannot
drift from either.
"""

from __future__ import annotations

import ast
import collections
import os
import sys
import textwrap
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
SOURCE = ROOT / "src" / "gainshape"


def wings() -> dict[str, list[str]]:
    """The WINGS table of tests/test_init.py, lowest wing first."""
    tree = ast.parse((ROOT / "tests" / "test_init.py").read_text())
    for node in tree.body:
        if isinstance(node, ast.Assign) and getattr(node.targets[0], "id", "") == "WINGS":
            return ast.literal_eval(node.value)
    raise LookupError("tests/test_init.py has no WINGS table")


def wing_of(module: str, table: dict[str, list[str]]) -> str:
    """The wing a dotted module name (below gainshape) belongs to."""
    head = module.split(".")[0]
    return head if head in table and "." in module else next(
        wing for wing, modules in table.items() if head in modules)


def import_counts(table: dict[str, list[str]]) -> collections.Counter:
    """(importing wing, imported wing) -> number of import statements, across wings."""
    counts: collections.Counter = collections.Counter()
    for path in SOURCE.rglob("*.py"):
        parts = path.relative_to(SOURCE).with_suffix("").parts
        if parts == ("__init__",):
            continue
        name = ".".join(parts)
        package = list(parts[:-1])
        for node in ast.walk(ast.parse(path.read_text())):
            if isinstance(node, ast.ImportFrom) and node.level:
                base = package[: len(package) - node.level + 1]
                target = ".".join([*base, node.module or node.names[0].name])
                pair = (wing_of(name, table), wing_of(target, table))
                if pair[0] != pair[1]:
                    counts[pair] += 1
    return counts


def draw(table: dict[str, list[str]], counts: collections.Counter):
    """The figure: one box per wing (lowest at the bottom), arrows to the wings it imports."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt
    from matplotlib.patches import FancyArrowPatch, FancyBboxPatch

    names = list(table)
    fig, ax = plt.subplots(figsize=(11.0, 0.78 * len(names) + 0.4))
    height, gap = 0.62, 0.16
    y_of = {wing: i * (height + gap) for i, wing in enumerate(names)}
    for wing, y in y_of.items():
        ax.add_patch(FancyBboxPatch((0.0, y), 8.4, height, boxstyle="round,pad=0.02",
                                    facecolor="#eef3f8", edgecolor="#4a6a8a", linewidth=1.0))
        ax.text(0.12, y + height / 2, wing, fontsize=10.5, fontweight="bold", va="center")
        ax.text(1.8, y + height / 2, textwrap.fill(", ".join(table[wing]), 72), fontsize=7.6,
                va="center", color="#333333")
    for k, ((upper, lower), count) in enumerate(sorted(counts.items(), key=lambda kv: (
            y_of[kv[0][0]] - y_of[kv[0][1]], kv[0][0]))):
        x = 8.7 + 0.2 * k
        arrow = FancyArrowPatch((x, y_of[upper] + height * 0.3), (x, y_of[lower] + height * 0.7),
                                arrowstyle="-|>", mutation_scale=8, linewidth=0.8,
                                color="#7a4a2a", shrinkA=0, shrinkB=0)
        ax.add_patch(arrow)
        ax.text(x + 0.03, (y_of[upper] + y_of[lower] + height) / 2, str(count), fontsize=6,
                rotation=90, va="center", color="#7a4a2a")
    hook = FancyArrowPatch((7.6, y_of["shaping"] + height), (7.6, y_of["showing"]),
                           arrowstyle="-|>", mutation_scale=8, linewidth=0.8, linestyle="--",
                           color="#2a6a3a", shrinkA=0, shrinkB=0)
    ax.add_patch(hook)
    ax.text(7.65, (y_of["shaping"] + y_of["showing"] + height) / 2,
            "FilterDesign.plot,\nby name (_showing)", fontsize=6.5, color="#2a6a3a", va="center")
    ax.set_xlim(-0.1, 8.9 + 0.2 * len(counts))
    ax.set_ylim(-0.1, y_of[names[-1]] + height + 0.1)
    ax.set_axis_off()
    ax.set_title("gainshape's wings, lowest first; an arrow points from a wing to one it "
                 "imports (import statements)", fontsize=8.5, loc="left")
    return fig


def write_picture(target: Path) -> Path:
    """Draw the picture into ``target`` (SVG), written whole under a temporary name first."""
    table = wings()
    fig = draw(table, import_counts(table))
    target.parent.mkdir(parents=True, exist_ok=True)
    staged = target.with_name(f".{target.name}.partial")
    fig.savefig(staged, format="svg", bbox_inches="tight")
    os.replace(staged, target)
    return target


if __name__ == "__main__":
    print(write_picture(Path(sys.argv[1] if len(sys.argv) > 1 else "wings.svg")))
