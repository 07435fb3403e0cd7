"""Small fits that pin every number the fit reports, fast enough to judge a mutant each
(issue 12: mutmut runs a mutant's tests fastest first and stops at the first failure, so
these run before the longer fits of tests/test_fit.py and tests/test_fit_paths.py).

- Logs: scipy.integrate.solve_ivp (DOP853, rtol = atol = 1e-12) on the independent
  virtual-work equations of tests/test_motion.py, short (1 s) and coarse (20-25 Hz), with
  seeded Gaussian noise; one link, and two links (the only fit of a chain).
- The fitted numbers, start angles and rates: scipy.optimize.least_squares (trf, 3-point
  Jacobian) on the same residuals.
- Standard errors: the Gauss-Newton covariance s^2 (J^T J)^-1 (Bates & Watts, Nonlinear
  Regression Analysis, sec. 2.3) on the Jacobian least_squares reports at its minimum.
- The path (iterations, simulations, the words it stops with): Madsen, Nielsen & Tingleff,
  algorithm 3.16, written out in numpy (tests/test_fit_paths.py's madsen_lm).
- The fitted run and both misfits: solve_ivp again from the numbers the fit gives.
"""
from __future__ import annotations

import math
import random
from dataclasses import replace

import numpy as np
import pytest
from scipy.optimize import least_squares

import refsolvers as ref
import shakestill as ss
from shakestill.fit import fitting
from shakestill.fit.fitting import _Model, _scales, fit, fit_dict, fit_steps, parameter_paths
from test_fit import TRUE_DAMPING, decay_log, read, rig_data, still
from test_fit_paths import WORDS, madsen_lm, two_link_data
from test_motion import scipy_states

TWO_TRUE = (3e-4, 1.5e-4)  # N m s, the two joints' damping the two-link log is made with


def run(rig, log, names):
    """fit_steps to the end: the progress it showed and the FitResult."""
    steps = fit_steps(rig, log, names)
    shown = []
    while True:
        try:
            shown.append(next(steps))
        except StopIteration as stop:
            return shown, stop.value


def scipy_fit(model, x0):
    """least_squares' minimum of the fit's residuals, with its Gauss-Newton standard errors
    (in scaled units) and misfit: x, errors, rms."""
    sol = least_squares(lambda x: np.array(model.residuals(list(x))), x0, jac="3-point",
                        diff_step=1e-4, xtol=1e-12, ftol=1e-12, gtol=1e-12)
    m, p = sol.jac.shape
    cov = np.linalg.inv(sol.jac.T @ sol.jac) * (sol.fun @ sol.fun) / (m - p)
    return sol.x, np.sqrt(cov.diagonal()), math.sqrt(sol.fun @ sol.fun / m)


def rms(a, b):
    return math.sqrt(np.mean((np.asarray(a) - np.asarray(b)) ** 2))


def check_against_references(rig, log, names, res, shown, data_of, true):
    """Every reported number of a fit against the references of the module docstring;
    data_of(values) is the rig file dict with the fitted numbers (for solve_ivp)."""
    paths = parameter_paths(rig, names)
    model = _Model(rig, log, paths, _scales(rig, paths))
    k, n = len(paths), rig.n_links
    q = np.array(log.angles_rad)
    x0 = [fitting._get(rig, p) / s for p, s in zip(paths, model.scales)] + \
        list(q[0]) + list((-3 * q[0] + 4 * q[1] - q[2]) / (2 * log.step_s))
    x, err, misfit = scipy_fit(model, x0)
    # the same minimum: numbers 1e-5 relative, angles 1e-7 rad, rates 1e-5 rad/s (both solvers
    # stop near 1e-8 in the scaled numbers), the misfit to 1e-6 relative
    assert res.values == pytest.approx(list(x[:k] * model.scales), rel=1e-5)
    assert res.initial_angles_rad == pytest.approx(list(x[k:k + n]), abs=1e-7)
    assert res.initial_rates_rad_s == pytest.approx(list(x[k + n:]), abs=1e-5)
    assert res.rms_rad == pytest.approx(misfit, rel=1e-6)
    # standard errors: the fit's forward difference at its last iterate against scipy's
    # central one at its minimum, 2e-3 relative; each error small and the truth within 3
    assert res.std_errors == pytest.approx(list(err[:k] * model.scales), rel=2e-3)
    for v, e, t in zip(res.values, res.std_errors, true):
        assert e < 0.1 * t and abs(v - t) < 3 * e
    # the path: algorithm 3.16 from the same start, the same numbers to 1e-9, the same
    # iterations and simulations (the fit's one more: the final run of the fitted numbers)
    xm, iterations, runs, how = madsen_lm(model.residuals, x0, k)
    assert res.values == pytest.approx(list(xm[:k] * model.scales), rel=1e-9)
    assert (res.iterations, res.work["simulations"]) == (iterations, runs + 1)
    assert res.converged and res.message == WORDS[how]
    # the runs: solve_ivp from the log's first samples with the rig's numbers (the start),
    # and from the fitted ones (the fitted run); 1e-7 rad, the misfits 1e-6 relative
    q0, w0 = x0[k:k + n], x0[k + n:]
    start = scipy_states(data_of(res.start), [*(np.array(q0)), *w0], np.array(log.t_s),
                         speed_of_t=still)[:, :n]
    assert res.rms_start_rad == pytest.approx(rms(start, q), rel=1e-6)
    assert res.rms_start_rad > 10 * res.rms_rad  # the start is far off: the check has teeth
    fitted = scipy_states(data_of(res.values), [*res.initial_angles_rad,
                                                *res.initial_rates_rad_s],
                          np.array(log.t_s), speed_of_t=still)[:, :n]
    assert np.abs(np.array(res.model_rad) - fitted).max() < 1e-7
    assert [getattr(lk, "joint_damping_N_m_s") for lk in res.rig.links] == pytest.approx(
        list(res.values), rel=1e-15)
    # progress: one (fraction, words) per simulation but the last, then (1.0, "done");
    # fractions rising, the first 1 / ((MAX_ITERATIONS + 1) (p + 1))
    p = k + 2 * n
    assert len(shown) == res.work["simulations"] and shown[-1] == (1.0, "done")
    fractions = [f for f, _ in shown[:-1]]
    assert fractions == sorted(fractions) and 0.0 < fractions[-1] <= 0.99
    assert fractions[0] == pytest.approx(1 / ((fitting.MAX_ITERATIONS + 1) * (p + 1)),
                                         rel=1e-12)
    assert [w for _, w in shown[:p + 2]] == ["the first run"] + [
        f"iteration 1: sensitivity {j} of {p}" for j in range(1, p + 1)] + [
        "iteration 1: trying a step"]
    # the reply: each field against the run it describes
    d = fit_dict(res)
    assert d["parameters"] == [{"path": a, "start": s, "value": v, "std_error": e}
                               for a, s, v, e in zip(paths, res.start, res.values,
                                                     res.std_errors)]
    assert d["samples"] == len(log.t_s) and d["simulations"] == runs + 1
    assert (d["iterations"], d["converged"], d["message"]) == (iterations, True, WORDS[how])
    assert (d["rms_start_rad"], d["rms_rad"]) == (res.rms_start_rad, res.rms_rad)
    assert d["initial_angles_rad"] == list(res.initial_angles_rad)
    assert d["initial_rates_rad_s"] == list(res.initial_rates_rad_s)
    assert d["skipped_columns"] == []


@pytest.mark.parametrize("start", [1 / 3, 100.0])
def test_a_one_second_fit_of_one_link_is_scipys_and_the_published_path(start):
    # 1 s of a 20 deg free decay at 20 Hz (21 samples), 0.05 deg noise; the fit starts at a
    # third of the damping the log was made with, or at 100 times it: a path with refused
    # steps and an accepted step its linear model predicted badly (gain 0.02), where the
    # damping update's formula decides the next steps, and that stops by the cost test.
    rig = ss.rig_from_dict(rig_data(TRUE_DAMPING * start))
    log = read(decay_log(20.0, duration_s=1.0, step_s=0.05, noise_deg=0.05, seed=3))
    shown, res = run(rig, log, ["damping"])
    assert res.start == (TRUE_DAMPING * start,) and len(log.t_s) == 21
    check_against_references(rig, log, ["damping"], res, shown,
                             lambda v: rig_data(v[0]), (TRUE_DAMPING,))


def two_link(damping):
    data = two_link_data()
    for lk, c in zip(data["links"], damping):
        lk["joint_damping_N_m_s"] = c
    return data


def test_a_one_second_fit_of_a_two_link_chain_is_scipys_and_the_published_path():
    # Both joints' damping of a two-link chain (drive standing still) from 1 s at 25 Hz of a
    # swing started at 20 and -15 deg, 0.05 deg noise on each angle; the fit starts at half
    # of each. Six numbers: two dampings, two start angles, two start rates.
    times = np.arange(0.0, 1.0 + 1e-9, 0.04)
    states = scipy_states(two_link(TWO_TRUE), [math.pi + math.radians(20.0),
                                               math.pi - math.radians(15.0), 0.0, 0.0],
                          times, speed_of_t=still)
    noise = random.Random(4)
    text = "t_s,angle1_deg,angle2_deg\n" + "\n".join(
        f"{t:.6f},{math.degrees(a - math.pi) + noise.gauss(0.0, 0.05):.9f},"
        f"{math.degrees(b - math.pi) + noise.gauss(0.0, 0.05):.9f}"
        for t, (a, b, _, _) in zip(times, states))
    rig = ss.rig_from_dict(two_link([c / 2 for c in TWO_TRUE]))
    log = read(text, n=2)
    shown, res = run(rig, log, ["damping"])
    assert res.parameters == ("links[0].joint_damping_N_m_s", "links[1].joint_damping_N_m_s")
    check_against_references(rig, log, ["damping"], res, shown, two_link, TWO_TRUE)


def failing(nth, how):
    """motion.simulate whose nth call reports a failure: success False, or its frames cut
    short (as when the integrator gives up part way)."""
    calls = [0]

    def simulate(*args, **kwargs):
        calls[0] += 1
        out = ss.simulate(*args, **kwargs)
        if calls[0] != nth:
            return out
        return replace(out, success=False) if how == "failed" else replace(
            out, t_s=out.t_s[:-1], angles_rad=out.angles_rad[:-1])
    return simulate


@pytest.mark.parametrize("how", ["failed", "short"])
def test_a_first_run_that_fails_is_refused_with_what_to_check(monkeypatch, how):
    # The start rig's run from the log's first samples fails (or stops before the log's end):
    # no misfit exists to lower, and the refusal says what to check (the documented words).
    monkeypatch.setattr(fitting, "simulate", failing(1, how))
    rig = ss.rig_from_dict(rig_data(TRUE_DAMPING / 3))
    log = read(decay_log(20.0, duration_s=1.0, step_s=0.05, noise_deg=0.05, seed=3))
    with pytest.raises(ValueError) as info:
        fit(rig, log, ["damping"])
    assert str(info.value) == ("log: the model cannot follow this log from its first samples "
                               "(the simulation failed); check the reference position and "
                               "the units")


@pytest.mark.parametrize("how", ["failed", "short"])
def test_a_sensitivity_run_that_fails_leaves_the_fit_on_scipys_minimum(monkeypatch, how):
    # The first sensitivity run (the damping's column of the first Jacobian) fails: that
    # column counts as zero, the first step leaves the damping alone, and the next iterations
    # (new Jacobians) still land on least_squares' minimum of the same residuals (1e-5).
    monkeypatch.setattr(fitting, "simulate", failing(2, how))
    rig = ss.rig_from_dict(rig_data(TRUE_DAMPING / 3))
    log = read(decay_log(20.0, duration_s=1.0, step_s=0.05, noise_deg=0.05, seed=3))
    res = fit(rig, log, ["damping"])
    paths = parameter_paths(rig, ["damping"])
    model = _Model(rig, log, paths, _scales(rig, paths))
    x, _, _ = scipy_fit(model, [TRUE_DAMPING / 3 / model.scales[0], log.angles_rad[0][0], 0.0])
    assert res.converged, res.message
    assert res.values[0] == pytest.approx(x[0] * model.scales[0], rel=1e-5)
