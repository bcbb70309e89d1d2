"""Tests of pinlib.physics.lines against published formulas, scikit-rf and a field solution."""

from __future__ import annotations

import doctest
import inspect
import math
import re
import warnings

import numpy as np
import pytest

from pinlib.core.errors import InputError, ValidityWarning
from pinlib.physics import lines
from pinlib.physics.lines import (
    C0,
    ETA0,
    VALIDITY,
    LineModel,
    from_per_length,
    line_methods,
    microstrip,
    stripline,
)

MIL = 25.4e-6  # 1 mil [m]
INCH = 0.0254  # [m]


# ============================================================================ source data
# Rows of check values, each with where it comes from. Invented edge cases are further down.

# derived from Hammerstad & Jensen 1980 closed forms (docs/references.md [D])
# (er, w/h, er_eff, Z0 [Ω]) for a strip of zero thickness
hammerstad_jensen_zero_thickness = [
    (4.3, 1.8, 3.246, 52.40),
    (4.4, 2.0, 3.344, 48.69),
    (10.0, 1.0, 6.705, 48.82),
]


@pytest.mark.parametrize(("er", "u", "er_eff", "z0"), hammerstad_jensen_zero_thickness)
def test_hammerstad_jensen_zero_thickness(er, u, er_eff, z0):
    h = 0.2e-3
    m = microstrip(u * h, h, er, 0.0)
    # the source prints 3 decimals of er_eff and 2 of Z0. er_eff: half a last digit.
    # Z0: one last digit, as the check values were worked from the rounded er_eff
    # (52.3946 Ω unrounded for the first row; 94.403 Ω / sqrt(3.246) = 52.3975 Ω).
    assert m.er_eff == pytest.approx(er_eff, abs=0.0005)
    assert m.z0 == pytest.approx(z0, abs=0.01)


def test_scikit_rf_reference_value():
    # published: scikit-rf 2.2 MLine(w=0.3 mm, h=0.2 mm, t=35 µm, ep_r=4.3) at 100 MHz
    # gives Z0 55.08 Ω, er_eff 3.066 (docs/references.md, Board traces)
    m = microstrip(0.3e-3, 0.2e-3, 4.3, 35e-6)
    assert m.z0 == pytest.approx(55.08, abs=0.005)
    assert m.er_eff == pytest.approx(3.066, abs=0.0005)


def test_ipc2141_microstrip_check_value():
    # derived from IPC-2141 microstrip formula (docs/references.md [D]):
    # er 4.3, h 10 mil, w 18 mil, t 1.4 mil -> 48.46 Ω
    m = microstrip(18 * MIL, 10 * MIL, 4.3, 1.4 * MIL, method="ipc-2141")
    assert m.z0 == pytest.approx(48.46, abs=0.005)


def test_ipc2141_stripline_check_value():
    # derived from IPC-2141 stripline formula (docs/references.md [D]):
    # er 4.3, b 20 mil, w 7 mil, t 0.7 mil -> 52.00 Ω.
    # w/(b-t) = 0.363 is just outside the formula's quoted range, hence the warning.
    with pytest.warns(ValidityWarning, match=r"w/\(b-t\) < 0.35"):
        s = stripline(7 * MIL, 20 * MIL, 4.3, 0.7 * MIL, method="ipc-2141")
    assert s.z0 == pytest.approx(52.00, abs=0.005)
    assert s.er_eff == 4.3


# ============================================================================ scikit-rf


def _skrf_mline(w, h, er, t, f_hz):
    rf = pytest.importorskip("skrf")
    from skrf.media import MLine

    freq = rf.Frequency(f_hz, f_hz, 1, unit="Hz")
    m = MLine(frequency=freq, w=w, h=h, t=t, ep_r=er, tand=0, rough=0)
    return float(np.real(m.z0_characteristic[0])), float(np.real(m.ep_reff_f[0]))


# scikit-rf MLine defaults to Hammerstad-Jensen with Kirschning-Jansen dispersion. At
# 100 MHz the dispersion on these substrates (h <= 1 mm) changes er_eff by < 0.03 %, so
# the quasi-static values must agree. The skin-depth warning of its loss model is filtered
# in case a future version raises it at this frequency.
@pytest.mark.filterwarnings("ignore:Conductor loss calculation invalid:RuntimeWarning")
@pytest.mark.parametrize("h", [0.2e-3, 1.0e-3])
@pytest.mark.parametrize("u", [0.3, 1.0, 3.0])
@pytest.mark.parametrize("er", [3.0, 4.3, 10.0])
@pytest.mark.parametrize("t", [0.0, 35e-6])
def test_microstrip_against_scikit_rf(h, u, er, t):
    z_ref, e_ref = _skrf_mline(u * h, h, er, t, 100e6)
    m = microstrip(u * h, h, er, t)
    # the brief asks for 2 %; both evaluate the same closed forms, so 0.1 % is held
    assert m.z0 == pytest.approx(z_ref, rel=0.001)
    assert m.er_eff == pytest.approx(e_ref, rel=0.001)


# ============================================================================ stripline


@pytest.mark.parametrize("wb", [0.01, 0.05, 0.1, 0.2, 0.35, 0.5, 1.0, 2.0, 5.0])
def test_wheeler_matches_cohn_exact_at_zero_thickness(wb):
    # derived from Cohn 1954 exact conformal-map result; Wheeler 1978 states 0.5 %
    exact = stripline(wb, 1.0, 1.0, 0.0, method="cohn").z0
    assert stripline(wb, 1.0, 1.0, 0.0, method="wheeler").z0 == pytest.approx(exact, rel=0.005)


def test_cohn_limits():
    # derived from the asymptotes of K(k)/K(k'):
    # wide strip, k -> 0: K(k)/K(k') -> 1/(w/b + 2 ln2/pi)  (parallel plates plus fringe)
    wb = 5.0
    z_wide = ETA0 / 4.0 / (wb + 2.0 * math.log(2.0) / math.pi)
    assert stripline(wb, 1.0, 1.0, method="cohn").z0 == pytest.approx(z_wide, rel=1e-6)
    # narrow strip, k' -> 0: K(k)/K(k') -> (2/pi) ln(8b/(pi w))
    wb = 1e-3
    z_narrow = ETA0 / (2.0 * math.pi) * math.log(8.0 / (math.pi * wb))
    assert stripline(wb, 1.0, 1.0, method="cohn").z0 == pytest.approx(z_narrow, rel=1e-6)


def test_cohn_elliptic_ratio_against_scipy():
    special = pytest.importorskip("scipy.special")
    wb = np.array([0.05, 0.2, 0.5, 1.0, 2.0])
    x = np.pi * wb / 2.0
    k, kp = 1.0 / np.cosh(x), np.tanh(x)
    # scipy's ellipk takes the parameter m = k^2; ellipkm1 takes 1 - m, exact for k' small
    ratio = special.ellipkm1(kp**2) / special.ellipk(kp**2)
    assert stripline(wb, 1.0, 1.0, method="cohn").z0 == pytest.approx(ETA0 / 4 * ratio, rel=1e-12)
    assert lines._k_ratio(k, kp) == pytest.approx(special.ellipk(k**2) / special.ellipk(kp**2))


def _laplace_stripline_z0(w, b, t, step, side=4.0):
    """Z0 of an air stripline from a finite-difference solution of Laplace's equation.

    One quarter of the cross-section (symmetry about the strip's two centre lines),
    5-point stencil, the planes and a side wall ``side*b`` away at 0 V, the strip at
    1 V. C per length from the field energy, Z0 = 1/(c0 C). Independent of the closed
    forms under test; with step = b/400 it reproduces Cohn's exact zero-thickness value
    to 0.3 %. [m]
    """
    sparse = pytest.importorskip("scipy.sparse")
    sparse_linalg = pytest.importorskip("scipy.sparse.linalg")
    nx, ny = round(side * b / step), round(0.5 * b / step)
    xs, ys = np.arange(nx + 1) * step, np.arange(ny + 1) * step
    v = np.zeros((ny + 1, nx + 1))
    strip = (xs[None, :] <= 0.5 * w + 1e-9 * step) & (ys[:, None] <= 0.5 * t + 1e-9 * step)
    fixed = strip.copy()
    fixed[ny, :] = True
    fixed[:, nx] = True
    v[strip] = 1.0
    free = ~fixed
    index = np.full(v.shape, -1)
    index[free] = np.arange(np.count_nonzero(free))
    jj, ii = np.nonzero(free)
    me = index[jj, ii]
    rows, cols, vals = [me], [me], [np.full(me.size, 4.0)]
    rhs = np.zeros(me.size)
    for dj, di in ((1, 0), (-1, 0), (0, 1), (0, -1)):
        # a neighbour across a symmetry line is the mirror node (zero normal field)
        nj, ni = np.abs(jj + dj), np.abs(ii + di)
        nb_free = free[nj, ni]
        rows.append(me[nb_free])
        cols.append(index[nj, ni][nb_free])
        vals.append(-np.ones(np.count_nonzero(nb_free)))
        np.add.at(rhs, me[~nb_free], v[nj, ni][~nb_free])
    n = me.size
    a = sparse.csr_matrix(
        (np.concatenate(vals), (np.concatenate(rows), np.concatenate(cols))), shape=(n, n)
    )
    v[free] = sparse_linalg.spsolve(a, rhs)
    ex, ey = np.diff(v, axis=1) ** 2, np.diff(v, axis=0) ** 2
    ex[0, :] *= 0.5  # links lying on a symmetry line belong half to this quarter
    ey[:, 0] *= 0.5
    c_per_eps0 = 4.0 * (ex.sum() + ey.sum())
    eps0 = 1.0 / (4e-7 * math.pi * C0**2)
    return 1.0 / (C0 * eps0 * c_per_eps0)


# (w/b, t/b): a 50 Ω FR-4 geometry and a wide, thick strip; grid-aligned at b/400
laplace_geometries = [(0.35, 0.035), (1.0, 0.1)]


@pytest.mark.parametrize(("wb", "tb"), laplace_geometries)
def test_wheeler_thickness_against_field_solution(wb, tb):
    # derived from a finite-difference solution of Laplace's equation (this file)
    z_fd = _laplace_stripline_z0(wb, 1.0, tb, step=1.0 / 400)
    # Wheeler's 0.5 % plus the grid's ~0.1 %
    assert stripline(wb, 1.0, 1.0, tb).z0 == pytest.approx(z_fd, rel=0.006)


def test_field_solver_reproduces_cohn():
    # guards the reference above: the same solver on a zero-thickness strip
    z_fd = _laplace_stripline_z0(0.35, 1.0, 0.0, step=1.0 / 400)
    assert z_fd == pytest.approx(stripline(0.35, 1.0, 1.0, method="cohn").z0, rel=0.003)


def test_fr4_stripline_50_ohm_per_length_bounds():
    # common practice, no source: a 50 Ω FR-4 stripline has about 3.5 pF/in and
    # 170 ps/in (docs/references.md gives 3.4-3.5 pF/in [M] and about 180 ps/in [C2])
    b, t, er = 20 * MIL, 0.7 * MIL, 4.3
    w = np.linspace(3 * MIL, 12 * MIL, 901)
    z0 = stripline(w, b, er, t).z0
    w50 = np.interp(50.0, z0[::-1], w[::-1])  # Z0 falls with w
    s = stripline(w50, b, er, t)
    assert s.z0 == pytest.approx(50.0, abs=0.05)
    assert 3.2e-12 <= s.c * INCH <= 3.8e-12
    assert 160e-12 <= s.tpd * INCH <= 185e-12


# ============================================================================ physics limits
# custom edge cases


def test_microstrip_in_air_travels_at_c0():
    # derived from TEM in a homogeneous medium: er = 1 gives er_eff = 1 exactly
    m = microstrip(np.array([0.1e-3, 1e-3]), 0.5e-3, 1.0, np.array([0.0, 35e-6]))
    np.testing.assert_allclose(m.er_eff, 1.0, rtol=1e-14)
    np.testing.assert_allclose(m.tpd, 1.0 / C0, rtol=1e-14)


def test_per_length_identities():
    # derived from the lossless line: Z0 = sqrt(L/C), tpd = sqrt(L C)
    for m in (
        microstrip(0.3e-3, 0.2e-3, 4.3, 35e-6),
        stripline(0.15e-3, 0.5e-3, 4.0, 18e-6),
        microstrip(0.3e-3, 0.2e-3, 4.3, 35e-6, method="ipc-2141"),
    ):
        assert math.sqrt(m.l / m.c) == pytest.approx(m.z0, rel=1e-12)
        assert math.sqrt(m.l * m.c) == pytest.approx(m.tpd, rel=1e-12)
        assert m.tpd == pytest.approx(math.sqrt(m.er_eff) / C0, rel=1e-12)


def test_stripline_z0_scales_with_permittivity():
    for method in lines.STRIPLINE_METHODS:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", ValidityWarning)
            z1 = stripline(0.1e-3, 0.5e-3, 1.0, 0.0, method=method).z0
            z4 = stripline(0.1e-3, 0.5e-3, 4.0, 0.0, method=method).z0
        assert z4 == pytest.approx(z1 / 2.0, rel=1e-12)


def test_thickness_lowers_impedance():
    t = np.array([0.0, 17.5e-6, 35e-6, 70e-6])
    assert np.all(np.diff(microstrip(0.3e-3, 0.2e-3, 4.3, t).z0) < 0)
    assert np.all(np.diff(stripline(0.15e-3, 0.5e-3, 4.3, t).z0) < 0)


def test_ipc_microstrip_shares_hammerstad_jensen_er_eff():
    args = (18 * MIL, 10 * MIL, 4.3, 1.4 * MIL)
    assert microstrip(*args, method="ipc-2141").er_eff == microstrip(*args).er_eff


# ============================================================================ arrays


def _rows(model: LineModel):
    return np.stack([np.asarray(f) for f in model], axis=-1)


@pytest.mark.parametrize("method", lines.MICROSTRIP_METHODS)
def test_microstrip_array_equals_scalars(method):
    w = np.array([[0.15e-3, 0.3e-3, 0.35e-3]])  # 0.5 <= w/h <= 1.75, inside both ranges
    h = np.array([[0.2e-3], [0.3e-3]])
    er, t = 4.3, np.array([0.0, 35e-6, 18e-6])
    got = microstrip(w, h, er, t, method=method)
    assert got.z0.shape == (2, 3)
    for i in range(2):
        for j in range(3):
            one = microstrip(float(w[0, j]), float(h[i, 0]), er, float(t[j]), method=method)
            assert all(np.ndim(f) == 0 for f in one)
            np.testing.assert_allclose(_rows(got)[i, j], _rows(one), rtol=1e-15)


@pytest.mark.parametrize("method", lines.STRIPLINE_METHODS)
def test_stripline_array_equals_scalars(method):
    w = np.array([0.08e-3, 0.12e-3, 0.15e-3])
    b, er = np.array([0.5e-3, 0.6e-3, 0.8e-3]), np.array([3.5, 4.3, 4.6])
    got = stripline(w, b, er, 0.0, method=method)
    for j in range(3):
        one = stripline(float(w[j]), float(b[j]), float(er[j]), 0.0, method=method)
        np.testing.assert_allclose(_rows(got)[j], _rows(one), rtol=1e-15)


def test_from_per_length_array_equals_scalars():
    c = np.array([1.1e-10, 1.3e-10])
    tpd = np.array([5.8e-9, 6.9e-9])
    got = from_per_length(c, tpd)
    for j in range(2):
        np.testing.assert_allclose(_rows(got)[j], _rows(from_per_length(c[j], tpd[j])), rtol=1e-15)


# ============================================================================ from_per_length


def test_from_per_length_round_trip():
    for m in (
        microstrip(np.array([0.1e-3, 0.3e-3, 1e-3]), 0.2e-3, 4.3, 35e-6),
        stripline(np.array([0.1e-3, 0.2e-3]), 0.5e-3, 3.8, 18e-6),
    ):
        back = from_per_length(m.c, m.tpd)
        for name in LineModel._fields:
            np.testing.assert_allclose(getattr(back, name), getattr(m, name), rtol=1e-13)


def test_from_per_length_design_example():
    # derived from Z0 = tpd/C: the design file's 1.1 pF/cm and 58 ps/cm -> 52.73 Ω
    m = from_per_length(1.1e-10, 5.8e-9)
    assert m.z0 == pytest.approx(52.727, abs=0.0005)
    assert m.l == pytest.approx(5.8e-9**2 / 1.1e-10, rel=1e-12)


# ============================================================================ validity


@pytest.mark.parametrize(
    ("kwargs", "pattern"),
    [
        (dict(w=0.005e-3, h=1e-3, er=4.3), r"0.01 <= w/h <= 100"),
        (dict(w=150e-3, h=1e-3, er=4.3), r"0.01 <= w/h <= 100"),
        (dict(w=1e-3, h=1e-3, er=200.0), r"er <= 128"),
        (dict(w=3e-3, h=1e-3, er=4.3, method="ipc-2141"), r"0.1 < w/h < 2"),
        (dict(w=0.05e-3, h=1e-3, er=4.3, method="ipc-2141"), r"0.1 < w/h < 2"),
        (dict(w=1e-3, h=1e-3, er=16.0, method="ipc-2141"), r"1 < er < 15"),
    ],
)
def test_microstrip_warns_outside_range(kwargs, pattern):
    with pytest.warns(ValidityWarning, match=pattern):
        microstrip(**kwargs)


@pytest.mark.parametrize(
    ("kwargs", "pattern"),
    [
        (dict(w=0.5e-3, b=1e-3, er=4.3, method="ipc-2141"), r"w/\(b-t\) < 0.35"),
        (dict(w=0.1e-3, b=1e-3, er=4.3, t=0.3e-3, method="ipc-2141"), r"t/b < 0.25"),
        (dict(w=0.1e-3, b=1e-3, er=4.3, t=35e-6, method="cohn"),
         r"thickness 35 µm is not taken into account"),
        (dict(w=12e-3, b=1e-3, er=4.3, t=35e-6), r"w'/\(b-t\) < 10"),
    ],
)
def test_stripline_warns_outside_range(kwargs, pattern):
    with pytest.warns(ValidityWarning, match=pattern):
        stripline(**kwargs)


def test_warning_counts_array_elements_outside():
    with pytest.warns(ValidityWarning, match=r"w/h outside .* in 2 of 4 "):
        microstrip(np.array([0.001e-3, 0.002e-3, 0.3e-3, 1e-3]), 1e-3, 4.3)


def test_ipc_microstrip_wide_trace_has_no_impedance():
    # 5.98 h <= 0.8 w + t: the formula's logarithm is not positive
    with pytest.warns(ValidityWarning):
        m = microstrip(8e-3, 1e-3, 4.3, method="ipc-2141")
    assert np.isnan(m.z0)


def test_line_methods_lists_valid_methods():
    assert line_methods("microstrip", 0.3e-3, 0.2e-3, 4.3, 35e-6) == [
        "hammerstad-jensen",
        "ipc-2141",
    ]
    assert line_methods("microstrip", 0.9e-3, 0.3e-3, 4.3) == ["hammerstad-jensen"]
    assert line_methods("microstrip", 0.001e-3, 1e-3, 4.3) == []
    assert line_methods("stripline", 0.1e-3, 0.5e-3, 4.3) == ["wheeler", "cohn", "ipc-2141"]
    # the IPC-2141 check geometry lies just outside the IPC range, and t > 0 excludes Cohn
    assert line_methods("stripline", 7 * MIL, 20 * MIL, 4.3, 0.7 * MIL) == ["wheeler"]
    # one element outside excludes the method for the whole array
    assert "ipc-2141" not in line_methods("stripline", np.array([0.1e-3, 0.3e-3]), 0.5e-3, 4.3)


def test_line_methods_agree_with_warnings():
    # a listed method does not warn; an unlisted one does
    geometries = [(0.3e-3, 0.2e-3, 4.3, 35e-6), (0.9e-3, 0.3e-3, 4.3, 0.0), (1e-5, 1e-3, 20, 0.0)]
    for g in geometries:
        listed = line_methods("microstrip", *g)
        for method in lines.MICROSTRIP_METHODS:
            with warnings.catch_warnings(record=True) as rec:
                warnings.simplefilter("always")
                microstrip(*g, method=method)
            assert (method in listed) == (not rec)


def test_every_validity_range_names_a_source():
    for kind, methods in VALIDITY.items():
        assert set(methods) == set(lines._METHODS[kind])
        for ranges in methods.values():
            assert ranges and all(r.source for r in ranges)


# ============================================================================ errors


@pytest.mark.parametrize(
    ("call", "pattern"),
    [
        (lambda: microstrip(0.0, 1e-3, 4.3), r"field 'w'.*got 0\.0"),
        (lambda: microstrip(-1e-3, 1e-3, 4.3), r"field 'w'"),
        (lambda: microstrip(np.array([1e-3, np.nan]), 1e-3, 4.3), r"field 'w'.*nan"),
        (lambda: microstrip(1e-3, 0.0, 4.3), r"field 'h'"),
        (lambda: microstrip(1e-3, 1e-3, 0.5), r"field 'er'.*>= 1"),
        (lambda: microstrip(1e-3, 1e-3, 4.3, -1e-6), r"field 't'.*>= 0"),
        (lambda: microstrip("wide", 1e-3, 4.3), r"field 'w'.*not a number"),
        (lambda: microstrip(1e-3, 1e-3, 4.3, method="wheeler"), r"'hammerstad-jensen', 'ipc-2141'"),
        (lambda: stripline(1e-3, 0.0, 4.3), r"field 'b'"),
        (lambda: stripline(1e-3, 1e-3, 4.3, 1e-3), r"field 't'.*plane spacing"),
        (lambda: stripline(1e-3, 1e-3, 4.3, method="IPC"), r"'wheeler', 'cohn', 'ipc-2141'"),
        (lambda: microstrip(np.ones(2), np.ones(3), 4.3), r"do not broadcast"),
        (lambda: from_per_length(0.0, 6e-9), r"field 'c'"),
        (lambda: from_per_length(1e-10, -6e-9), r"field 'tpd'"),
        (lambda: from_per_length(1e-10, 3e-9), r"field 'tpd'.*faster than light"),
        (lambda: line_methods("coax", 1e-3, 1e-3, 4.3), r"field 'kind'.*'microstrip'"),
    ],
)
def test_bad_input_raises(call, pattern):
    with pytest.raises(InputError, match=pattern):
        call()


def test_input_error_is_a_value_error():
    with pytest.raises(ValueError):
        stripline(1e-3, -1e-3, 4.3)


# ============================================================================ API guards


def test_signatures():
    # will fail if parameter names change
    assert list(inspect.signature(microstrip).parameters) == ["w", "h", "er", "t", "method"]
    assert list(inspect.signature(stripline).parameters) == ["w", "b", "er", "t", "method"]
    assert list(inspect.signature(from_per_length).parameters) == ["c", "tpd"]
    assert list(inspect.signature(line_methods).parameters) == ["kind", "w", "h", "er", "t"]
    assert inspect.signature(microstrip).parameters["method"].default == "hammerstad-jensen"
    assert inspect.signature(stripline).parameters["method"].default == "wheeler"
    assert LineModel._fields == ("z0", "er_eff", "tpd", "c", "l")
    assert C0 == 299792458.0


@pytest.mark.parametrize("func", [microstrip, stripline, from_per_length, line_methods])
def test_docstring_parameters_match_signature_and_carry_units(func):
    doc = inspect.getdoc(func)
    section = doc.split("Parameters\n----------\n", 1)[1].split("\n\n", 1)[0]
    documented = re.findall(r"^(\w+) : ", section, flags=re.M)
    assert documented == list(inspect.signature(func).parameters)
    descriptions = re.split(r"^\w+ : .*$", section, flags=re.M)[1:]
    assert all(re.search(r"\[[^\]]+\]\s*$", d.strip()) for d in descriptions)


def test_docstring_examples():
    # the package and the modules that hold its functions
    results = [doctest.testmod(module, optionflags=doctest.NORMALIZE_WHITESPACE)
               for module in (lines, lines.model, lines.validity, lines.microstrip_models,
                              lines.stripline_models)]
    assert sum(result.attempted for result in results) > 0
    assert sum(result.failed for result in results) == 0


# ============================================================================ edges of methods


def test_ipc_microstrip_follows_its_formula():
    # from memory: the IPC-2141 (IPC-D-317A) microstrip form as commonly quoted,
    # Z0 = 87/sqrt(er + 1.41) ln(5.98h/(0.8w + t)); by hand for w = 0.2 mm, h = 0.18 mm,
    # t = 35 µm, er = 4.2: 87/2.368544 * ln(1.0764/0.195) = 36.73143 * 1.708378 = 62.751 Ω
    m = microstrip(0.2e-3, 0.18e-3, 4.2, 35e-6, method="ipc-2141")
    assert float(m.z0) == pytest.approx(62.751, abs=1e-3)


def test_ipc_formulas_reach_zero_at_their_widest_width():
    # the width the guard names is where the logarithm's argument is 1 (Z0 = 0 there)
    for kind, model, h in (("microstrip", microstrip, 0.1e-3), ("stripline", stripline, 0.4e-3)):
        w = lines.widest_width(kind, "ipc-2141", h, 35e-6)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", ValidityWarning)
            assert abs(float(model(w * (1 - 1e-9), h, 4.2, 35e-6, method="ipc-2141").z0)) < 1e-6
            assert np.isnan(model(w * 1.01, h, 4.2, 35e-6, method="ipc-2141").z0)
    assert lines.widest_width("microstrip", "hammerstad-jensen", 0.1e-3, 0.0) is None


@pytest.mark.parametrize("w_over_b", [13.0, 100.0, 474.0, 1000.0, 1e4])
def test_cohn_stripline_stays_positive_for_very_wide_strips(w_over_b):
    # common practice, no source: a strip far wider than its plane spacing is two
    # parallel-plate lines side by side, Z0 -> eta0 b/(4 w sqrt(er)); Cohn's exact ratio
    # adds the fringe ln 2 to pi w/(2b). Before, k = sech(pi w/2b) underflowed past
    # w/b of about 474 and Z0 came out 0.
    b, er = 1e-3, 4.2
    z0 = float(stripline(w_over_b * b, b, er, method="cohn").z0)
    x = math.pi * w_over_b / 2.0
    plates = lines.ETA0 * b / (4.0 * w_over_b * b * math.sqrt(er))
    assert z0 == pytest.approx(plates * x / (x + math.log(2.0)), rel=1e-12)


def test_cohn_wide_form_meets_the_exact_ratio():
    # the two ways of the ratio agree where they meet (x = 20) and on either side
    x = np.linspace(15.0, 25.0, 11)
    ex = np.exp(-x)
    exact = lines._k_ratio(2.0 * ex / (1.0 + ex * ex), np.tanh(x))
    np.testing.assert_allclose(exact, math.pi / (2.0 * (x + math.log(2.0))), rtol=1e-14)


def test_cohn_note_names_the_thickness_it_does_not_count():
    with pytest.warns(ValidityWarning) as caught:
        z_cohn = float(stripline(0.15e-3, 0.5e-3, 4.2, 18e-6, method="cohn").z0)
    assert len(caught) == 1
    text = str(caught[0].message)
    assert "exact for a strip of zero thickness" in text
    assert "thickness 18 µm is not taken into account" in text
    assert "use 'wheeler'" in text
    # Cohn's Z0 is the zero-thickness strip's, and the note gives it and Wheeler's
    # (pinlib's own formulas, each held to an outside reference in this file)
    z_zero = float(stripline(0.15e-3, 0.5e-3, 4.2, 0.0, method="cohn").z0)
    z_wheeler = float(stripline(0.15e-3, 0.5e-3, 4.2, 18e-6).z0)
    assert z_cohn == z_zero
    assert f"Z0 {z_zero:.1f} Ω" in text and f"gives {z_wheeler:.1f} Ω" in text
    # a zero thickness warns of nothing
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        stripline(0.15e-3, 0.5e-3, 4.2, 0.0, method="cohn")


def test_cohn_note_counts_the_thick_strips_of_an_array():
    with pytest.warns(ValidityWarning, match=r"thickness 18 µm is not taken into "
                                             r"account \(in 2 of 3\)"):
        stripline(0.15e-3, 0.5e-3, 4.2, np.array([0.0, 18e-6, 35e-6]), method="cohn")
