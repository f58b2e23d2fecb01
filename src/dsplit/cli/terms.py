"""Click command ``terms``: every dⁿ ligand-field state from Δ, B, C (or AOM eσ, eπ), or Δ and B
fitted to measured bands.  No quantum chemistry; a thin shell over dsplit.api.terms.

Exit codes: 0 fine, 2 bad input (one line naming the flag, nothing written).
"""

from __future__ import annotations

import os
import sys

import click

from dsplit.cli.options import handles_errors


def _bands(text: str | None) -> list[float] | None:
    from dsplit.errors import InputError

    if text is None:
        return None
    try:
        return [float(x) for x in text.replace(" ", "").split(",") if x]
    except ValueError:
        raise InputError("--bands", f"cannot read '{text}'; write wavenumbers in cm⁻¹, e.g. 17400,24600") from None


def _figure_format(path: str | None) -> str | None:
    from pathlib import Path

    from dsplit.errors import InputError

    if path is None:
        return None
    p = Path(path)
    if p.suffix.lower() not in (".png", ".svg"):
        raise InputError("--figure", f"'{path}': use a .png or .svg file name")
    if not p.parent.resolve().is_dir():
        raise InputError("--figure", f"the folder {p.parent} does not exist")
    return p.suffix.lower()[1:]


def _num(x: float | None, digits: int = 0) -> str:
    return "—" if x is None else f"{x:,.{digits}f}"


def _print(result) -> None:
    from rich.table import Table

    from dsplit.console import output_console
    from dsplit.units import cm1_to_ev, cm1_to_nm

    out = output_console()
    group = f" ({result.point_group})" if result.point_group else ""
    fit = result.fit
    if fit is not None:
        t = Table(title=f"d{result.d_count} {result.geometry}{group}: Δ and B fitted to {len(fit.bands_cm1)} "
                        f"measured band(s)")
        for col in ("quantity", "value", "unit", "how"):
            t.add_column(col)
        t.add_row("Δ (ligand-field splitting)", _num(fit.delta_cm1), "cm⁻¹", "fitted")
        t.add_row("Racah B", _num(fit.b_cm1), "cm⁻¹", "fitted" if "B" in fit.fitted else fit.held.get("B", ""))
        t.add_row("Racah C", _num(fit.c_cm1), "cm⁻¹", "fitted" if "C" in fit.fitted else fit.held.get("C", ""))
        t.add_row("β = B / B(free ion)", _num(fit.beta, 3), "—",
                  "needs --metal and --oxidation-state" if fit.beta is None else "free-ion B from a handbook table")
        t.add_row("residual (RMS, model − measured)", _num(fit.residual_cm1, 1), "cm⁻¹", "")
        out.print(t)
        bands = Table(title=f"band assignment (ground 2S+1 = {fit.multiplicity})")
        for col in ("measured / cm⁻¹", "model / cm⁻¹", "model − measured / cm⁻¹", "assigned term"):
            bands.add_column(col)
        for nu, model, label in zip(fit.bands_cm1, fit.model_cm1, fit.assigned):
            bands.add_row(_num(nu), _num(model), _num(model - nu), label)
        out.print(bands)
        for note in fit.notes:
            out.print(f"note: {note}")
    spec = result.spectrum
    if spec is not None:
        ratio = f"(C/B = {result.c_over_b:.2f})" if result.c_cm1 is not None else ""
        out.print(f"d{result.d_count} {result.geometry}{group}: Δ = {_num(result.delta_cm1)} cm⁻¹, "
                  f"B = {_num(result.b_cm1)} cm⁻¹, C = {_num(result.c_cm1)} cm⁻¹ {ratio}".rstrip())
        t = Table(title="ligand-field terms (energy above the ground term)")
        # numbers never wrap or get cut to "…" in a narrow terminal; the configuration column folds
        for col in ("term", "2S+1", "irrep", "states", "E / cm⁻¹", "E / eV", "λ / nm", "allowed"):
            t.add_column(col, no_wrap=True)
        t.add_column("configuration (weight)", overflow="fold", min_width=12)
        for term in spec.terms:
            conf = ", ".join(f"{c} {w:.2f}" for c, w in term.configurations[:2])
            lam = _num(cm1_to_nm(term.energy)) if term.energy > 1e-6 else "—"
            t.add_row(term.label, str(term.multiplicity), term.irrep, str(term.multiplicity * term.degeneracy),
                      _num(term.energy), _num(cm1_to_ev(term.energy), 3), lam, "yes" if term.spin_allowed else "no",
                      conf)
        out.print(t)
    for note in result.notes:
        out.print(f"note: {note}")
    out.print("computed with a ligand-field model; approximations — confirm by experiment")


@click.command("terms")
@click.option("--d", "d_count", type=int, required=True, help="Number of d electrons n of dⁿ (1–9).")
@click.option("--geometry", default="octahedral", show_default=True,
              help="octahedral, tetrahedral, square-planar, trigonal-bipyramidal, square-pyramidal, "
                   "trigonal-prismatic or linear.")
@click.option("--delta", "delta_cm1", type=float, help="Ligand-field splitting Δ in cm⁻¹.")
@click.option("--B", "b_cm1", type=float, help="Racah B in cm⁻¹.")
@click.option("--C", "c_cm1", type=float, help="Racah C in cm⁻¹ (default C = (C/B)·B).")
@click.option("--C-over-B", "c_over_b", type=float, help="C/B when --C is not given [default 4.5].")
@click.option("--aom", multiple=True,
              help="Angular-overlap parameters instead of --delta: ligand:eσ,eπ in cm⁻¹ (one kind on every site), "
                   "or ligand=count:eσ,eπ once per kind, e.g. --aom chlorido=2:5500,1000 --aom ammine=4:7200,0.")
@click.option("--isomer", help="Isomer of several --aom ligands (cis, trans, fac, mer, …).")
@click.option("--bands", "bands_text", help="Measured spin-allowed bands in cm⁻¹, e.g. 17400,24600: fit Δ and B.")
@click.option("--metal", help="Metal symbol, for β = B/B(free ion).")
@click.option("--oxidation-state", type=int, help="Metal oxidation state, for β.")
@click.option("--figure", "figure", type=click.Path(dir_okay=False), help="Write the term diagram (.png or .svg).")
@click.option("--json", "as_json", is_flag=True, help="Print the result as JSON.")
@handles_errors
def terms_cmd(d_count, geometry, delta_cm1, b_cm1, c_cm1, c_over_b, aom, isomer, bands_text, metal,
              oxidation_state, figure, as_json) -> None:
    """Every ligand-field state of dⁿ (energies, 2S+1, irreps, configurations) — no quantum chemistry."""
    if "numpy" not in sys.modules:  # matrices of at most 100×100: BLAS threads only cost time here
        for var in ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS"):
            os.environ.setdefault(var, "1")
    from dsplit.api.terms import compute_terms, term_figure

    fmt = _figure_format(figure)
    result = compute_terms(d_count, geometry, delta_cm1=delta_cm1, b_cm1=b_cm1, c_cm1=c_cm1, c_over_b=c_over_b,
                           aom=aom, isomer=isomer, bands_cm1=_bands(bands_text), metal=metal,
                           oxidation_state=oxidation_state)
    if fmt is not None:
        from pathlib import Path

        data = term_figure(result, fmt)
        tmp = Path(figure).with_name(Path(figure).name + ".part")
        tmp.write_bytes(data)
        tmp.replace(figure)
    if as_json:
        import json

        doc = result.to_dict()
        doc["figure"] = figure
        click.echo(json.dumps(doc, indent=2, ensure_ascii=False))
        return
    _print(result)
    if figure:
        click.echo(f"written: {figure}")
