"""Table cells of archive list/compare (archive/tables.py)."""

from dsplit.archive.tables import render


def test_wavenumbers_whole_and_energies_to_three_decimals():
    # band positions are quoted to whole cm⁻¹ (common practice: spectra are read to ±10 cm⁻¹ or worse)
    rows = [{"delta_state_eV": 2.35512, "delta_state_cm1": 18994.485}]
    cols = [("delta_state_eV", "Δ state/eV"), ("delta_state_cm1", "Δ state/cm⁻¹")]
    for fmt in ("text", "markdown", "html"):
        out = render(rows, cols, fmt)
        assert "2.355" in out and "18994" in out and "18994.485" not in out


def test_figure_labels_tell_runs_apart():
    from dsplit.archive.query import run_labels

    rows = [{"ligands": "fluorido:6", "metal": "Ti", "theory": "HF"},
            {"ligands": "fluorido:6", "metal": "Ti", "theory": "B3LYP"},
            {"ligands": "chlorido:6", "metal": "Ti", "theory": "HF"}]
    assert run_labels(rows, "ligands") == ["fluorido:6 HF", "fluorido:6 B3LYP", "chlorido:6 HF"]
    assert run_labels(rows[:1] + rows[2:], "ligands") == ["fluorido:6", "chlorido:6"]
