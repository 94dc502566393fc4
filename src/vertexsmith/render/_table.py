"""Plain tables for the terminal, laid out directly, with rich only where a layout needs it.

The text renderer's tables are simple: a header in bold, columns of left- or right-justified
text, a rule under the header, a blank line between rows, and grids (no header, two spaces
between columns) nested in a cell. Laying those out by hand costs a few string operations per
cell, where rich's general machinery (measuring, segments, styles) cost more than deriving the
rules. The layout here reproduces, byte for byte, what rich prints for the same table with the
box `SIMPLE_HEAD` (the test suite compares the two on every shipped model at several widths), and
measures every string with rich's own cell-width function, so that wide and combining characters
count as rich counts them. Only two layouts are wrapped here: a paragraph, and the last column of
a grid, both at spaces, as rich wraps them. Anything else that does not fit the width (a table
wider than the terminal, a word longer than a line, control characters) is handed to rich
(`rich_lines`), which is imported only then.

    >>> lines = lay_out(Table((Column("name"), Column("value", justify="right")), (("e", "0.3"),)), 40)
    >>> [line.rstrip() for line in lines]
    ['', '  name   value', ' ─────────────', '  e        0.3', '']
"""

from __future__ import annotations

import io
import re
from dataclasses import dataclass
from typing import Union

from rich.cells import cell_len

BOLD, RESET = "\x1b[1m", "\x1b[0m"
_WORD = re.compile(r"\s*\S+\s*")  # a word and the spaces after it, as rich's wrapping reads text


@dataclass(frozen=True)
class Column:
    """A column: its header, how its cells are justified, and whether its text may be wrapped."""

    header: str = ""
    justify: str = "left"  # or "right"
    wrap: bool = True


@dataclass(frozen=True)
class Grid:
    """Columns without header, box or edges, two spaces apart; only the last column may wrap."""

    columns: tuple[Column, ...]
    rows: tuple[tuple[str, ...], ...]


@dataclass(frozen=True)
class Table:
    """A table with a bold header row and a rule under it; `show_lines` puts a blank line between rows.

    Rich would narrow a table that is too wide by wrapping its columns at spaces; `overflow` keeps
    the cells as their author broke them (rich is never asked to lay such a table out).
    """

    columns: tuple[Column, ...]
    rows: tuple[tuple["Cell", ...], ...]
    show_lines: bool = False
    # True: the cells were broken to fit by their author (factors, broken between terms only), and a
    # cell that is still too wide widens the table rather than be broken again inside a bracket
    overflow: bool = False


Cell = Union[str, Grid]
Block = Union[str, Grid, Table]  # a str is a paragraph


def _plain(text: str) -> bool:
    """Text this module lays out itself: printable characters and newlines only (no tabs, no escapes)."""
    return all(line.isprintable() for line in text.split("\n"))


def _printable(cell: Cell) -> Cell:
    if isinstance(cell, Grid):
        return Grid(cell.columns, tuple(tuple(_printable(c) for c in row) for row in cell.rows))  # type: ignore[misc]
    return "\n".join("".join(c if c.isprintable() else "\ufffd" for c in line) for line in cell.split("\n"))


def _pad(text: str, width: int, justify: str) -> str:
    if justify == "right":
        text = text.rstrip()  # rich right-justifies a line without its trailing spaces
        return " " * (width - cell_len(text)) + text
    return text + " " * (width - cell_len(text))


def wrap_words(text: str, width: int) -> list[str] | None:
    """One line of text broken at spaces into lines of at most `width` cells, as rich breaks it.

    None when a word is longer than the width (rich would fold it inside the word).
    """
    starts: list[int] = []
    used = 0
    for match in _WORD.finditer(text):
        start, word = match.start(), match.group(0)
        length = cell_len(word.rstrip())
        if width - used >= length:
            used += cell_len(word)
        elif length > width:
            return None
        elif used and start:
            starts.append(start)
            used = cell_len(word)
    bounds = [0, *starts, len(text)]
    return [text[a:b] for a, b in zip(bounds, bounds[1:])]


def _cell_lines(cell: Cell) -> list[str] | None:
    if isinstance(cell, Grid):
        return _grid_lines(cell, None)
    return cell.split("\n") if _plain(cell) else None


def natural_width(cell: Cell) -> int:
    """The width a cell takes when nothing in it is wrapped."""
    if isinstance(cell, Grid):
        widths = [max((_width(row[k].split("\n")) for row in cell.rows), default=0) for k in range(len(cell.columns))]
        return sum(widths) + 2 * (len(widths) - 1)
    return _width(cell.split("\n"))


def _width(lines: list[str]) -> int:
    return max((cell_len(line) for line in lines), default=0)


def _grid_lines(grid: Grid, width: int | None) -> list[str] | None:
    """A grid at its natural width, or wrapped in its last column to fit `width` (None: rich's job)."""
    cells = [[c.split("\n") if _plain(c) else None for c in row] for row in grid.rows]
    if any(lines is None for row in cells for lines in row):
        return None
    widths = [max((_width(row[k]) for row in cells), default=0) for k in range(len(grid.columns))]  # type: ignore[arg-type]
    gaps = 2 * (len(widths) - 1)  # an empty column takes no room, but keeps its gap (as in rich)
    if width is not None and sum(widths) + gaps > width:
        last = grid.columns[-1]
        room = width - gaps - sum(widths[:-1])
        # rich narrows only the columns that may wrap; here that must be the last one alone
        if not last.wrap or any(c.wrap for c in grid.columns[:-1]) or room < 1:
            return None
        wrapped: list[list[list[str]]] = []
        for row in cells:
            pieces: list[str] = []
            for line in row[-1]:  # type: ignore[union-attr]
                broken = wrap_words(line, room)
                if broken is None:
                    return None
                pieces.extend(broken)
            wrapped.append([*row[:-1], pieces])  # type: ignore[list-item]
        # as rich measures again: each cell's natural width, capped by the room left
        widths[-1] = max(min(_width(row[-1]), room) for row in cells)  # type: ignore[arg-type]
        cells = [[*row[:-1], [line.rstrip() if cell_len(line) > widths[-1] else line for line in row[-1]]]
                 for row in wrapped]
    out: list[str] = []
    for row in cells:
        height = max(len(lines) for lines in row)  # type: ignore[arg-type]
        for n in range(height):
            out.append("  ".join(_pad(lines[n] if n < len(lines) else "", w, c.justify)  # type: ignore[index, arg-type]
                                 for lines, w, c in zip(row, widths, grid.columns)))
    return out


def _table_lines(table: Table, width: int, color: bool) -> list[str] | None:
    cells = [[_cell_lines(c) for c in row] for row in table.rows]
    if any(lines is None for row in cells for lines in row) or not all(_plain(c.header) for c in table.columns):
        return None
    widths = [max([cell_len(column.header)] + [_width(row[k]) for row in cells])  # type: ignore[arg-type]
              for k, column in enumerate(table.columns)]
    widths = [w or 1 for w in widths]
    # two spaces of padding per column, one between columns and one at either edge
    if sum(widths) + 3 * len(widths) + 1 > width and not table.overflow:
        return None
    header = " ".join(_header_cell(_pad(c.header, w, c.justify), color) for c, w in zip(table.columns, widths))
    out = ["", f" {header} ", " " + "─" * (sum(widths) + 3 * len(widths) - 1) + " "]
    for k, row in enumerate(cells):
        if k and table.show_lines:
            out.append("")
        height = max(len(lines) for lines in row)  # type: ignore[arg-type]
        for n in range(height):
            line = " ".join(" " + _pad(lines[n] if n < len(lines) else "", w, c.justify) + " "  # type: ignore[index]
                            for lines, w, c in zip(row, widths, table.columns))
            out.append(f" {line} ")
    out.append("")
    return out


def _header_cell(text: str, color: bool) -> str:
    # rich styles the padding and the text of a header cell as three separate runs of bold
    return f"{BOLD} {RESET}{BOLD}{text}{RESET}{BOLD} {RESET}" if color else f" {text} "


def lay_out(block: Block, width: int, color: bool = False) -> list[str]:
    """The block's lines (trailing spaces not stripped), laid out here when simple, else by rich."""
    lines: list[str] | None
    if isinstance(block, Table):
        lines = _table_lines(block, width, color)
        if lines is None and block.overflow:  # control characters in a cell: print them as they are
            lines = _table_lines(Table(block.columns, tuple(tuple(_printable(c) for c in row) for row in block.rows),
                                       block.show_lines, True), width, color)
    elif isinstance(block, Grid):
        lines = _grid_lines(block, width)
    else:
        lines = [] if _plain(block) else None
        for line in block.split("\n") if lines is not None else ():
            broken = wrap_words(line, width)
            if broken is None:
                lines = None
                break
            lines.extend(broken)  # type: ignore[union-attr]
    return lines if lines is not None else rich_lines(block, width, color)


# ------------------------------------------------------------------ rich, for what is not simple

def _to_rich(block: Block):  # type: ignore[no-untyped-def]
    from rich import box
    from rich.table import Table as RichTable
    from rich.text import Text

    if isinstance(block, str):
        return Text(block)
    if isinstance(block, Grid):
        grid = RichTable.grid(padding=(0, 2))
        for column in block.columns:
            grid.add_column(justify=column.justify, no_wrap=not column.wrap)  # type: ignore[arg-type]
        for row in block.rows:
            grid.add_row(*[Text(cell) for cell in row])
        return grid
    table = RichTable(box=box.SIMPLE_HEAD, show_lines=block.show_lines)
    for column in block.columns:
        table.add_column(column.header, justify=column.justify, no_wrap=not column.wrap)  # type: ignore[arg-type]
    for row in block.rows:
        table.add_row(*[_to_rich(cell) for cell in row])
    return table


def rich_lines(block: Block, width: int, color: bool = False) -> list[str]:
    """The block as rich prints it at this width (the reference the direct layout reproduces)."""
    from rich.console import Console

    buffer = io.StringIO()
    console = Console(file=buffer, width=width, color_system="standard" if color else None,
                      force_terminal=color, no_color=not color, highlight=False, emoji=False, markup=False,
                      legacy_windows=False, soft_wrap=False, record=False)
    console.print(_to_rich(block))
    return buffer.getvalue().split("\n")[:-1]


__all__ = ["Column", "Grid", "Table", "Cell", "Block", "lay_out", "natural_width", "rich_lines", "wrap_words"]
