"""Fitting a material row from loss-density points (least squares, scipy).

Points are generated from known coefficients with the law the model evaluates,
P = k f^α B^β (ct0 - ct1 T + ct2 T²) (Steinmetz 1892; temperature factor: common practice,
no source), so the fit must give the coefficients back; a noisy set must stay close.
"""

import numpy as np
import pytest

from optimag.catalog import fit_material as fm
from optimag.cli import main
from optimag.errors import InputError

# Coefficients of the demo catalogue's fer-lowf row (invented); temperature factor 1 at
# its minimum (100 degC).
TRUE = {"k": 18.88, "alpha": 1.3, "beta": 2.6, "ct0": 2.0, "ct1": 0.02, "ct2": 0.0001}
HEADER = "frequency_kHz,peak_flux_T,temperature_C,loss_density_kW_m3"


def _points(noise=0.0, bias=(), seed=0, frequencies=(25, 50, 100, 150),
            fluxes=(0.05, 0.1, 0.2), temperatures=(25, 60, 100, 120)):
    rng = np.random.default_rng(seed)
    levels = [(0.0, 1.0), *bias]
    rows = []
    for f in frequencies:
        for b in fluxes:
            for t in temperatures:
                for h, factor in levels:
                    ct = TRUE["ct0"] - TRUE["ct1"] * t + TRUE["ct2"] * t * t
                    p = TRUE["k"] * (f * 1e3) ** TRUE["alpha"] * b ** TRUE["beta"] * ct * factor
                    p *= 1.0 + noise * rng.standard_normal()
                    rows.append((f, b, t, p / 1e3, h))
    return rows


def _write(path, rows, with_field=False):
    header = HEADER + (",dc_field_A_m" if with_field else "")
    lines = [header] + [
        ",".join(f"{v:.12g}" for v in (row if with_field else row[:4])) for row in rows
    ]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def test_exact_points_give_the_coefficients_back(tmp_path):
    fit = fm.fit_material(fm.read_points(_write(tmp_path / "p.csv", _points())))
    assert fit.k == pytest.approx(TRUE["k"], rel=1e-6)
    assert fit.alpha == pytest.approx(TRUE["alpha"], abs=1e-7)
    assert fit.beta == pytest.approx(TRUE["beta"], abs=1e-7)
    assert fit.ct0 == pytest.approx(TRUE["ct0"], rel=1e-6)
    assert fit.ct1_per_C == pytest.approx(TRUE["ct1"], rel=1e-6)
    assert fit.ct2_per_C2 == pytest.approx(TRUE["ct2"], rel=1e-6)
    assert (fit.f_min_kHz, fit.f_max_kHz, fit.b_max_T) == (25.0, 150.0, 0.2)
    assert np.max(np.abs(fit.relative_error)) < 1e-7


def test_dc_bias_factors_are_recovered(tmp_path):
    rows = _points(bias=((40.0, 1.3), (80.0, 1.9)))
    fit = fm.fit_material(fm.read_points(_write(tmp_path / "p.csv", rows, with_field=True)))
    assert fit.bias_h_A_m == (40.0, 80.0)
    np.testing.assert_allclose(fit.bias_factor, (1.3, 1.9), rtol=1e-6)
    assert fit.alpha == pytest.approx(TRUE["alpha"], abs=1e-7)


def test_noisy_points_stay_close(tmp_path):
    """5 % log-normal-ish scatter on 48 points: exponents within a few hundredths, the
    loss at the centre of the data within a few per cent."""
    fit = fm.fit_material(fm.read_points(_write(tmp_path / "p.csv", _points(0.05, seed=3))))
    assert fit.alpha == pytest.approx(TRUE["alpha"], abs=0.05)
    assert fit.beta == pytest.approx(TRUE["beta"], abs=0.08)
    centre = (70e3, 0.1, 80.0)

    def loss(k, a, b, c0, c1, c2):
        f, bb, t = centre
        return k * f**a * bb**b * (c0 - c1 * t + c2 * t * t)

    fitted = loss(fit.k, fit.alpha, fit.beta, fit.ct0, fit.ct1_per_C, fit.ct2_per_C2)
    assert fitted == pytest.approx(loss(*TRUE.values()), rel=0.05)
    assert 0.02 < np.max(np.abs(fit.relative_error)) < 0.3


@pytest.mark.parametrize(
    ("kwargs", "words"),
    [
        ({"frequencies": (100,)}, "two different frequencies"),
        ({"fluxes": (0.1,)}, "two different peak flux densities"),
        ({"temperatures": (25, 100)}, "three different temperatures"),
    ],
)
def test_data_that_cannot_determine_the_fit_is_refused(tmp_path, kwargs, words):
    path = _write(tmp_path / "p.csv", _points(**kwargs))
    with pytest.raises(InputError, match=words):
        fm.fit_material(fm.read_points(path))


def test_command_prints_errors_writes_a_row_and_refuses_to_overwrite(tmp_path, capsys):
    points = _write(tmp_path / "p.csv", _points(0.02, seed=1))
    out = tmp_path / "materials.csv"
    assert main(["fit-material", str(points), "--name", "lab-ferrite", "--out", str(out)]) == 0
    printed = capsys.readouterr().out
    assert "worst: line" in printed and "error" in printed
    header, row = out.read_text(encoding="utf-8").splitlines()
    cells = dict(zip(header.split(","), row.split(","), strict=True))
    assert cells["id"] == "lab-ferrite"
    assert float(cells["steinmetz_alpha"]) == pytest.approx(TRUE["alpha"], abs=0.05)
    assert header.split(",")[:19] == list(fm.MATERIAL_COLUMNS)
    assert main(["fit-material", str(points), "--out", str(out)]) == 2
    assert "refusing to overwrite" in capsys.readouterr().err
    # Without --out the row is printed.
    assert main(["fit-material", str(points)]) == 0
    assert "steinmetz_k" in capsys.readouterr().out


def test_command_refuses_bad_files_with_one_line_per_problem(tmp_path, capsys):
    bad = tmp_path / "bad.csv"
    bad.write_text(HEADER + "\n100,0.1,25,abc\n100,-0.1,25,3\n", encoding="utf-8")
    assert main(["fit-material", str(bad)]) == 2
    err = capsys.readouterr().err
    assert f"{bad}:2: loss_density_kW_m3:" in err
    assert f"{bad}:3: peak_flux_T:" in err
    few = _write(tmp_path / "few.csv", _points(temperatures=(25,)))
    assert main(["fit-material", str(few)]) == 2
    assert "cannot determine the fit" in capsys.readouterr().err
