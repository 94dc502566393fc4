"""The mass spectrum (`Rules.spectrum`) in each output format: text table, LaTeX lines, HTML section.

One module for the three so that the reading of a mass matrix is written down once: bosons show
M^2 (rows and columns the sector's fields), fermions M (rows the left parts, columns the right
parts: L = -bar(psi_L) M psi_R + h.c.; Majorana: L = -1/2 bar(chi) M PR chi + h.c.), the kinetic
matrix Z where it is not the unit matrix, symbolic eigenvalues block by block, and the numeric
ones, ascending, from the model's values.
"""

from __future__ import annotations

from html import escape
from typing import TYPE_CHECKING

import sympy

from ..symbolic import factor_text, to_latex
from ._table import Column, Table

if TYPE_CHECKING:
    from ..breaking.spectrum import MassMatrix, Spectrum

READING = ("bosons: M^2 over the sector's fields (K = Z p^2 - M^2); fermions: M between left parts (rows) and "
           "right parts (columns), L = -bar(psi_L) M psi_R + h.c. (Majorana: with 1/2); Z the kinetic matrix "
           "where it is not 1; numeric eigenvalues ascending")


def _matrix_text(mat: sympy.Matrix) -> str:
    return "[" + "; ".join(", ".join(factor_text(mat[i, j]) for j in range(mat.cols)) for i in range(mat.rows)) + "]"


def _numbers_text(numbers: tuple[float, ...] | None, missing: tuple[str, ...]) -> str:
    if numbers is None:
        return f"needs values for {', '.join(missing)}" if missing else "–"
    return ", ".join(f"{x:.8g}" for x in numbers)


def _quantity(mat: "MassMatrix") -> str:
    return "M^2" if mat.squared else "M"


def spectrum_table(spectrum: "Spectrum") -> Table:
    """One row per sector: its fields, matrices, symbolic and numeric eigenvalues."""
    rows = []
    for mat in spectrum.matrices:
        matrices = f"{_quantity(mat)} = {_matrix_text(mat.matrix)}"
        if mat.kinetic is not None:
            matrices += f"; Z = {_matrix_text(mat.kinetic)}"
        if mat.kinetic_right is not None:
            matrices += f"; Z_R = {_matrix_text(mat.kinetic_right)}"
        symbolic = "–" if mat.eigenvalues is None else ", ".join(factor_text(e) for e in mat.eigenvalues)
        rows.append((mat.sector, " ".join(mat.fields), matrices, symbolic,
                     _numbers_text(mat.numeric, mat.missing)))
    return Table((Column("sector"), Column("fields"), Column("matrix"), Column("eigenvalues"),
                  Column("numeric")), tuple(rows), show_lines=True)


def _mixing_rows(spectrum: "Spectrum") -> list[tuple[str, str, str, str]]:
    rows = []
    for r in spectrum.mixings:
        what = f"line {r.line}: {r.statement}"
        matrix = "NEW = R OLD, R = " + (_matrix_text(r.matrix) if r.matrix is not None else "(a matrix parameter)")
        if r.numeric is not None:
            matrix += " = " + "[" + "; ".join(", ".join(_complex_text(z) for z in row) for row in r.numeric) + "]"
        before = "" if r.before is None else f"block before: {_matrix_text(r.before)}"
        found = r.relation or ("masses: " + ", ".join(f"{x:.8g}" for x in r.masses) if r.masses else "")
        rows.append((what, matrix, before, found))
    return rows


def _complex_text(z: complex) -> str:
    if abs(z.imag) <= 1e-15 * max(1.0, abs(z)):
        return f"{z.real:.8g}"
    return f"({z.real:.8g} {'+' if z.imag >= 0 else '-'} {abs(z.imag):.8g} I)"


def _mixed_text(spectrum: "Spectrum") -> str:
    if not spectrum.mixed:
        return "nothing: every propagator is diagonal"
    return "; ".join(f"{a} with {b} (line{'s' if len(lines) > 1 else ''} {', '.join(map(str, lines))})"
                     for a, b, lines in spectrum.mixed) + ": these share a propagator matrix"


def spectrum_sections(spectrum: "Spectrum") -> list[tuple[str, "Table | str"]]:
    """The text output's sections: rotations applied, mass matrices, what still mixes."""
    out: list[tuple[str, Table | str]] = []
    if spectrum.mixings:
        out.append(("Rotations to mass eigenstates (NEW = R OLD)",
                    Table((Column("statement"), Column("matrix"), Column("before"), Column("defines / finds")),
                          tuple(_mixing_rows(spectrum)), show_lines=True)))
    out.append((f"Mass matrices ({READING})", spectrum_table(spectrum)))
    out.append(("Still mixed at quadratic order", _mixed_text(spectrum)))
    return out


def _matrix_latex(mat: sympy.Matrix) -> str:
    rows = [" & ".join(to_latex(mat[i, j]) for j in range(mat.cols)) for i in range(mat.rows)]
    return r"\begin{pmatrix}" + r" \\ ".join(rows) + r"\end{pmatrix}"


def spectrum_latex(spectrum: "Spectrum") -> list[str]:
    """LaTeX lines: a comment saying how the matrices read, then one align* per sector."""
    out = []
    for r in spectrum.mixings:
        out.append(f"% line {r.line}: {r.statement}" + (f"; {r.relation}" if r.relation else ""))
        if r.matrix is not None:
            out += [r"\begin{align*}", rf"&R = {_matrix_latex(r.matrix)}", r"\end{align*}"]
    out.append("% mass matrices: " + READING)
    for mat in spectrum.matrices:
        basis = ", ".join(to_latex(sympy.Symbol(f)) for f in mat.fields)
        sector = mat.sector.replace("_", r"\_")
        lines = [rf"&\text{{{sector}}}:\ ({basis})"]
        lines.append(rf"&{'M^2' if mat.squared else 'M'} = {_matrix_latex(mat.matrix)}")
        if mat.kinetic is not None:
            lines.append(rf"&Z = {_matrix_latex(mat.kinetic)}")
        if mat.kinetic_right is not None:
            lines.append(rf"&Z_R = {_matrix_latex(mat.kinetic_right)}")
        if mat.eigenvalues is not None:
            what = "m^2" if mat.squared else "m"
            lines.append(rf"&{what} \in \left\{{{', '.join(to_latex(e) for e in mat.eigenvalues)}\right\}}")
        if mat.numeric is not None:
            lines.append(r"&\text{numeric: }" + ", ".join(f"{x:.8g}" for x in mat.numeric))
        out += [r"\begin{align*}", *[line + r" \\" for line in lines[:-1]], lines[-1], r"\end{align*}"]
    out.append("% still mixed at quadratic order: " + _mixed_text(spectrum))
    return out


def spectrum_html(spectrum: "Spectrum", maths: "callable") -> str:  # type: ignore[valid-type]
    """The spectrum as an HTML section (a table; `maths` turns LaTeX into inline MathML)."""
    rows = []
    for mat in spectrum.matrices:
        cells = [escape(mat.sector), " ".join(f"<code>{escape(f)}</code>" for f in mat.fields),
                 maths(("M^2 = " if mat.squared else "M = ") + _matrix_latex(mat.matrix))
                 + ("" if mat.kinetic is None else " " + maths("Z = " + _matrix_latex(mat.kinetic))),
                 "&#8211;" if mat.eigenvalues is None else maths(", ".join(to_latex(e) for e in mat.eigenvalues)),
                 escape(_numbers_text(mat.numeric, mat.missing))]
        rows.append("<tr>" + "".join(f"<td>{c}</td>" for c in cells) + "</tr>")
    head = "".join(f"<th>{h}</th>" for h in ("sector", "fields", "matrix", "eigenvalues", "numeric"))
    rotations = "".join(f"<li>{escape(what)}: {escape(matrix)}{'; ' + escape(before) if before else ''}"
                        f"{'; ' + escape(found) if found else ''}</li>" for what, matrix, before, found in
                        _mixing_rows(spectrum))
    return ('<section><h2 id="spectrum">Mass matrices and spectrum</h2>'
            + (f"<h3>Rotations to mass eigenstates</h3><ul>{rotations}</ul>" if rotations else "")
            + f"<p>{escape(READING)}.</p><table><thead><tr>{head}</tr></thead><tbody>"
            + "".join(rows) + "</tbody></table>"
            f"<p>Still mixed at quadratic order: {escape(_mixed_text(spectrum))}.</p></section>")


__all__ = ["READING", "spectrum_html", "spectrum_latex", "spectrum_sections", "spectrum_table"]
