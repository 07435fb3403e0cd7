"""The fit's paths that tests/test_fit.py leaves open, against outside references (issue 12).

- Logs are made by scipy.integrate.solve_ivp (DOP853, rtol = atol = 1e-12) on the independent
  virtual-work equations of tests/test_motion.py (tests/test_fit.py's decay_log), short and
  coarse (2 s at 50 Hz) so every test stays quick.
- What the fit reports about a run (its starting misfit, the fitted run, its misfit) is
  re-simulated by solve_ivp from the numbers the fit gives.
- Standard errors: the Gauss-Newton covariance s^2 (J^T J)^-1 (e.g. Bates & Watts, Nonlinear
  Regression Analysis, sec. 2.3) on the Jacobian scipy.optimize.least_squares reports at its own
  minimum of the same residuals.
- The start rates: the second-order one-sided difference (-3 q0 + 4 q1 - q2) / (2 h) is exact
  for a quadratic (Fornberg's weights; a worked quadratic, no other source needed).
"""
from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.optimize import least_squares

import refsolvers as ref
import shakestill as ss
from shakestill.fit import fitting
from shakestill.fit.fitting import (_Model, _initial_rates, _scales, fit, fit_dict, fit_steps,
                                    parameter_paths)
from shakestill.fit.logfile import AngleLog, read_angle_log
from test_fit import (BOB_AT, BOB_M, ROD_L, ROD_M, TRUE_DAMPING, decay_log, read, rig_data,
                      still)
from test_motion import scipy_states

G = ref.G_STANDARD
J_PIVOT = ROD_M * ROD_L ** 2 / 3 + BOB_M * BOB_AT ** 2  # textbook rod + bob about the pivot
K_GRAVITY = G * (ROD_M * ROD_L / 2 + BOB_M * BOB_AT)  # gravity stiffness m g d, hanging


def two_link_data():
    return ref.rig([ref.link(0.20, 0.04, [(0.01, 0.20)], 0.0, 1e-4),
                    ref.link(0.15, 0.03, [(0.008, 0.12)], 0.0, 1e-4)], ref.sine(0.0, 600.0))


def fitted_decay():
    """A 25 deg free decay (0.02 deg noise), fitted for the damping from a quarter of it; the
    simulations the fit runs are counted by a wrapper around motion.simulate. Called in each
    test's body (about a second), not a fixture: mutmut maps a test to the functions its body
    calls, and leaves out what a fixture calls (the mutants of the fit would not run it)."""
    text = decay_log(25.0, duration_s=2.0, step_s=0.02, noise_deg=0.02)
    rig = ss.rig_from_dict(rig_data(TRUE_DAMPING / 4))
    log = read(text)
    calls = []
    with pytest.MonkeyPatch.context() as mp:
        mp.setattr(fitting, "simulate", lambda *a, **k: calls.append(1) or ss.simulate(*a, **k))
        steps = fit_steps(rig, log, ["damping"])
        shown = []
        while True:
            try:
                shown.append(next(steps))
            except StopIteration as stop:
                res = stop.value
                break
    return {"rig": rig, "log": log, "res": res, "shown": shown, "simulations": len(calls)}


def solve_ivp_angles(damping, q0, w0, times):
    """Angles of the test pendulum by solve_ivp from (q0, w0), the drive standing still."""
    states = scipy_states(rig_data(damping), [q0, w0], np.asarray(times), speed_of_t=still)
    return states[:, 0]


def rms(a, b):
    return math.sqrt(np.mean((np.asarray(a) - np.asarray(b)) ** 2))


# ------------------------------------------------------------------ what the fit reports

def test_starting_misfit_is_the_start_rig_run_from_the_logs_first_samples():
    # The start: the rig's own damping, the first logged angle and the second-order one-sided
    # difference of the first three samples as the rate; solve_ivp runs it, and the rms of its
    # difference from the log is the reported rms_start_rad (1e-6 relative: both solvers at
    # 1e-10 or better on a misfit of several degrees).
    decay = fitted_decay()
    log, res = decay["log"], decay["res"]
    q = [row[0] for row in log.angles_rad]
    w0 = (-3 * q[0] + 4 * q[1] - q[2]) / (2 * log.step_s)
    want = rms(solve_ivp_angles(TRUE_DAMPING / 4, q[0], w0, log.t_s), q)
    assert want > math.radians(1.0)  # the start is far off: the check has teeth
    assert res.rms_start_rad == pytest.approx(want, rel=1e-6)
    assert res.start == (TRUE_DAMPING / 4,)  # the rig file's own number


def test_fitted_run_is_the_run_of_the_fitted_numbers():
    # solve_ivp from the fitted start angle and rate with the fitted damping reproduces the
    # model angles the fit reports (1e-7 rad) and their rms misfit (1e-6 relative), which is
    # the log's 0.02 deg noise (10%: 101 samples of Gaussian noise).
    decay = fitted_decay()
    log, res = decay["log"], decay["res"]
    (q0,), (w0,) = res.initial_angles_rad, res.initial_rates_rad_s
    want = solve_ivp_angles(res.values[0], q0, w0, log.t_s)
    got = np.array([row[0] for row in res.model_rad])
    assert np.abs(got - want).max() < 1e-7
    assert res.rms_rad == pytest.approx(rms(want, [row[0] for row in log.angles_rad]), rel=1e-6)
    assert res.rms_rad == pytest.approx(math.radians(0.02), rel=0.1)
    assert res.rig.links[0].joint_damping_N_m_s == res.values[0]
    assert res.converged, res.message
    assert abs(res.values[0] - TRUE_DAMPING) < 3 * res.std_errors[0]


def test_standard_error_is_the_gauss_newton_covariance_at_scipys_minimum():
    # scipy.optimize.least_squares minimises the same residuals (damping scaled as the fit
    # scales it, start angle and rate) with a central-difference Jacobian; s^2 (J^T J)^-1 with
    # s^2 = |r|^2 / (m - p) at its minimum gives the standard errors. The fit's own (a forward
    # difference at its last iterate) agrees to 1e-3 relative; m - p against m - p - 1 is 0.5%.
    decay = fitted_decay()
    rig, log, res = decay["rig"], decay["log"], decay["res"]
    paths = parameter_paths(rig, ["damping"])
    model = _Model(rig, log, paths, _scales(rig, paths))
    x0 = [TRUE_DAMPING / 4 / model.scales[0], log.angles_rad[0][0], 0.0]
    sol = least_squares(lambda x: np.array(model.residuals(list(x))), x0, jac="3-point",
                        diff_step=1e-4, xtol=1e-12, ftol=1e-12, gtol=1e-12)
    jac, r = sol.jac, sol.fun
    m, p = jac.shape
    cov = np.linalg.inv(jac.T @ jac) * (r @ r) / (m - p)
    assert m == len(log.t_s) and p == 3
    assert res.values[0] == pytest.approx(sol.x[0] * model.scales[0], rel=1e-5)
    assert res.std_errors[0] == pytest.approx(math.sqrt(cov[0, 0]) * model.scales[0], rel=1e-3)
    assert res.initial_angles_rad[0] == pytest.approx(sol.x[1], abs=1e-7)
    assert res.initial_rates_rad_s[0] == pytest.approx(sol.x[2], abs=1e-6)


def test_progress_is_shown_after_every_simulation_but_the_last():
    # The docstring's contract: one (fraction, words) after each simulation, fractions that
    # never go back and stay below 1 until the final (1.0, "done"); the simulations the reply
    # counts are the calls of motion.simulate counted by a wrapper (the final run of the
    # fitted numbers, which shows nothing, included).
    decay = fitted_decay()
    shown, res = decay["shown"], decay["res"]
    assert res.work["simulations"] == decay["simulations"]
    assert len(shown) == decay["simulations"]  # every run but the last, and "done"
    assert shown[-1] == (1.0, "done")
    fractions = [f for f, _ in shown[:-1]]
    assert all(0.0 < f <= 0.99 for f in fractions)
    assert fractions == sorted(fractions)
    # (max_iterations + 1) runs of p + 1 simulations are planned: p = 3 here
    assert fractions[0] == pytest.approx(1 / ((fitting.MAX_ITERATIONS + 1) * 4), rel=1e-12)
    assert shown[0][1] == "the first run"
    assert shown[1][1] == "iteration 1: sensitivity 1 of 3"
    assert shown[3][1] == "iteration 1: sensitivity 3 of 3"
    assert shown[4][1] == "iteration 1: trying a step"
    assert 1 <= res.iterations <= fitting.MAX_ITERATIONS


def test_the_reply_carries_the_fit():
    # fit_dict is the JSON of `fit --json`: each field against the run it describes (the log's
    # row count, the rig file's start, the wrapper's count of simulations).
    decay = fitted_decay()
    res = decay["res"]
    d = fit_dict(res)
    assert d["samples"] == 101 == len(decay["log"].t_s)  # 2 s at 50 Hz, both ends
    assert d["parameters"] == [{"path": "links[0].joint_damping_N_m_s", "start": TRUE_DAMPING / 4,
                                "value": res.values[0], "std_error": res.std_errors[0]}]
    assert d["simulations"] == decay["simulations"]
    assert d["rms_start_rad"] == res.rms_start_rad and d["rms_rad"] == res.rms_rad
    assert d["initial_angles_rad"] == list(res.initial_angles_rad)
    assert d["initial_rates_rad_s"] == list(res.initial_rates_rad_s)
    assert d["converged"] is True and d["iterations"] == res.iterations
    assert d["message"] == res.message != ""


# ------------------------------------------------------------------ logs of other kinds

def table_speed(times, rpms):
    """(phase, omega, alpha) of a speed linear between the rows of a table (rad, rad/s,
    rad/s^2), the phase 0 at t = 0: the trapezoid rule is exact for a linear speed."""
    ws = [2 * math.pi * v / 60.0 for v in rpms]
    phases = [0.0]
    for k in range(1, len(times)):
        phases.append(phases[-1] + 0.5 * (ws[k - 1] + ws[k]) * (times[k] - times[k - 1]))

    def speed_of_t(t):
        k = min(max(int(np.searchsorted(times, t, side="right")) - 1, 0), len(times) - 2)
        alpha = (ws[k + 1] - ws[k]) / (times[k + 1] - times[k])
        tau = t - times[k]
        return phases[k] + ws[k] * tau + 0.5 * alpha * tau * tau, ws[k] + alpha * tau, alpha
    return speed_of_t


def test_logged_drive_speed_is_the_one_simulated():
    # The rig file says 2700 rpm; the run was logged speeding up from 1200 rpm (1200 + 1500 t^2
    # rpm, a speed column in every row; stroke 20 mm: the pivot shakes the swing visibly).
    # solve_ivp makes the log with the logged speed linear between rows (the table's reading);
    # the fit must follow every row of it: the damping the log was made with within 1e-4
    # relative (no noise) and a misfit under 1e-6 rad.
    data = rig_data(TRUE_DAMPING, speed=1200.0)
    times = np.arange(0.0, 0.6 + 1e-9, 0.01)
    rpms = [1200.0 + 1500.0 * float(t) ** 2 for t in times]
    states = scipy_states(data, [math.pi + 0.4, 0.0], times,
                          speed_of_t=table_speed(times, rpms))
    text = "t_s,angle_rad,speed_rpm\n" + "\n".join(
        f"{float(t)!r},{float(q - math.pi)!r},{v!r}" for t, (q, _), v in zip(times, states, rpms))
    res = fit(ss.rig_from_dict(rig_data(TRUE_DAMPING / 2, speed=2700.0)),
              read_angle_log(text, 1), ["damping"])
    assert res.values[0] == pytest.approx(TRUE_DAMPING, rel=1e-4)
    assert res.rms_rad < 1e-6
    assert res.converged, res.message


def test_samples_off_the_even_grid_are_read_between_frames():
    # Sample times jittered by up to 0.2 of a step (the reader allows 0.25) at 200 Hz: the
    # model is read between its two frames by straight-line interpolation, whose error is at
    # most h^2 max|q''| / 8 (the linear interpolation bound, e.g. Burden & Faires, Numerical
    # Analysis, thm 3.3); the noise-free log's misfit stays under that bound and the damping
    # within 1% of the one the log was made with.
    step = 0.005
    times = np.arange(0, 201) * step + 0.2 * step * np.sin(np.arange(0, 201) * 1.7)
    times[0], times[-1] = 0.0, 200 * step  # the ends on the grid: the step is theirs
    states = scipy_states(rig_data(TRUE_DAMPING), [math.pi + 0.4, 0.0], times,
                          speed_of_t=still)
    text = "t_s,angle_rad\n" + "\n".join(f"{float(t)!r},{float(q - math.pi)!r}" for t, (q, _) in
                                         zip(times, states))
    accel = K_GRAVITY / J_PIVOT * math.sin(0.4)  # the largest |q''| of the swing, at its end
    bound = step ** 2 * accel / 8
    res = fit(ss.rig_from_dict(rig_data(TRUE_DAMPING / 2)), read(text), ["damping"])
    assert res.rms_rad < bound
    assert res.values[0] == pytest.approx(TRUE_DAMPING, rel=0.01)


def test_friction_the_log_does_not_show_settles_at_its_bound():
    # A decay made with viscous damping alone (solve_ivp), fitted for damping and friction:
    # the friction goes to its bound 0, and the reply says so instead of claiming success.
    res = fit(ss.rig_from_dict(rig_data(TRUE_DAMPING / 2, friction=1e-4)),
              read(decay_log(25.0, duration_s=2.0, step_s=0.02)), ["damping", "friction"])
    assert res.values[1] == 0.0
    assert not res.converged
    assert res.message == ("links[0].joint_friction_N_m settled at its bound 0: the log does "
                           "not show it; leave it out of the fit")
    assert res.values[0] == pytest.approx(TRUE_DAMPING, rel=1e-3)  # the log's own damping


# ------------------------------------------------------------------ the pieces

def test_scales_are_small_fractions_of_the_textbook_pendulum():
    # _scales' documented sizes with the textbook J = m_rod L^2 / 3 + m_bob a^2 and
    # k = g (m_rod L / 2 + m_bob a): 1% of critical damping 2 sqrt(J k), the gravity torque at
    # 0.01 rad, 1% of J; or a tenth of the number itself when that is larger.
    rig = ss.rig_from_dict(rig_data(1e-4))
    paths = parameter_paths(rig, ["damping", "friction", "inertia"])
    want = [0.01 * 2 * math.sqrt(J_PIVOT * K_GRAVITY), 0.01 * K_GRAVITY, 0.01 * J_PIVOT]
    assert _scales(rig, paths) == pytest.approx(want, rel=1e-12)
    big = ss.rig_from_dict(rig_data(0.05, friction=0.5))
    assert _scales(big, paths) == pytest.approx([0.005, 0.05, 0.01 * J_PIVOT], rel=1e-12)


def test_start_rates_are_exact_for_a_quadratic():
    # q_j(t) = a_j + b_j t + c_j t^2 on two links: the start rate is b_j (rounding only).
    h = 0.01
    coeffs = [(3.0, 0.7, -2.5), (2.0, -1.3, 4.0)]
    rows = tuple(tuple(a + b * (i * h) + c * (i * h) ** 2 for a, b, c in coeffs)
                 for i in range(12))
    log = AngleLog(tuple(i * h for i in range(12)), rows, None, "hanging", h)
    assert _initial_rates(log) == pytest.approx([0.7, -1.3], rel=1e-9)


def test_short_names_mean_that_number_of_every_link():
    rig = ss.rig_from_dict(two_link_data())
    assert parameter_paths(rig, ["damping", "links[1].extra_inertia_kg_m2"]) == (
        "links[0].joint_damping_N_m_s", "links[1].joint_damping_N_m_s",
        "links[1].extra_inertia_kg_m2")
    assert parameter_paths(rig, ["friction"]) == ("links[0].joint_friction_N_m",
                                                  "links[1].joint_friction_N_m")
    assert parameter_paths(rig, ["inertia"]) == ("links[0].extra_inertia_kg_m2",
                                                 "links[1].extra_inertia_kg_m2")


@pytest.mark.parametrize("names, fragment", [
    (["links[2].joint_damping_N_m_s"], "'links[2].joint_damping_N_m_s' is not allowed: use "
     "damping, friction, inertia, or links[i].<joint_damping_N_m_s | joint_friction_N_m | "
     "extra_inertia_kg_m2> with i from 0 to 1"),
    (["links[0].length_m"], "'links[0].length_m' is not allowed"),
    (["grip"], "'grip' is not allowed"),
    (["damping", "links[0].joint_damping_N_m_s"], "is not allowed: name each number once"),
    ([], "[] is not allowed: name each number once"),
])
def test_bad_parameter_names_are_refused(names, fragment):
    rig = ss.rig_from_dict(two_link_data())
    with pytest.raises(ValueError) as info:
        parameter_paths(rig, names)
    assert str(info.value).startswith("parameters: ") and fragment in str(info.value)


@pytest.mark.parametrize("options, fragment", [
    ({"max_iterations": 0}, "max_iterations: 0 must be from 1 to 200"),
    ({"max_iterations": 201}, "max_iterations: 201 must be from 1 to 200"),
])
def test_iteration_limits_outside_the_range_are_refused(options, fragment):
    rig = ss.rig_from_dict(rig_data(1e-4))
    with pytest.raises(ValueError, match=fragment):
        fit(rig, read(decay_log(10.0, duration_s=0.5, step_s=0.05)), ["damping"], **options)


def test_one_iteration_is_allowed_and_says_it_stopped():
    rig = ss.rig_from_dict(rig_data(TRUE_DAMPING / 4))
    res = fit(rig, read(decay_log(25.0, duration_s=1.0, step_s=0.05)), ["damping"],
              max_iterations=1)
    assert res.iterations == 1 and not res.converged
    assert res.message == "stopped after 1 iterations before the fit settled"
    assert res.rms_rad < res.rms_start_rad  # the one step it took lowered the misfit
    most = fit(rig, read(decay_log(25.0, duration_s=1.0, step_s=0.05)), ["damping"],
               max_iterations=200)  # the top of the allowed range
    assert most.converged and most.iterations < 200, most.message


def test_a_log_of_another_link_count_or_no_motion_is_refused():
    rig = ss.rig_from_dict(two_link_data())
    with pytest.raises(ValueError, match=r"log: it has 1 angle column\(s\) and the rig 2 link"):
        fit(rig, read(decay_log(10.0, duration_s=0.5, step_s=0.05)), ["damping"])
    # 5e-5 rad of motion (under the 1e-4 rad floor) is refused; in degrees, 0.0029 deg
    one = ss.rig_from_dict(rig_data(1e-4))
    text = "t_s,angle_rad\n" + "\n".join(f"{i * 0.01},{5e-5 * (i % 2)}" for i in range(20))
    with pytest.raises(ValueError) as info:
        fit(one, read(text), ["damping"])
    assert str(info.value) == ("log: the logged angles move by 0.0029 deg at most: a log with no "
                               "motion cannot tell damping, friction or inertia")
    # exactly the floor (0 and 1e-4 rad from upright, both exact in binary) is fitted
    text = "t_s,angle_rad\n" + "\n".join(f"{i * 0.01},{1e-4 * (i % 2)}" for i in range(20))
    res = fit(one, read(text, reference="inverted"), ["damping"], max_iterations=1)
    assert res.iterations == 1


# ------------------------------------------------------------------ the Levenberg-Marquardt path

def madsen_lm(residuals, x, k, max_iterations=fitting.MAX_ITERATIONS):
    """K. Madsen, H. B. Nielsen, O. Tingleff, Methods for Non-Linear Least Squares Problems
    (2004), algorithm 3.16, written out with numpy: Marquardt's scaling (mu diag(A)), the
    damping update mu *= max(1/3, 1 - (2 rho - 1)^3), nu = 2 on success, mu *= nu, nu *= 2 on
    failure; forward-difference Jacobian (step 1e-5 max(1, |x_j|)) recomputed after every
    accepted step; the first k numbers projected onto >= 0; stops (constants of fitting.py): the
    gradient test |g|_inf <= 1e-8 sqrt(2 F max a_ii), a step under 1e-7 (|x| + 1e-7), an
    accepted step lowering F by no more than 1e-10 F, mu above 1e16, or the iteration count.
    Returns (x, iterations, residual evaluations, how it stopped)."""
    evals = [0]

    def f(v):
        evals[0] += 1
        return np.array(residuals(list(v)))

    x = np.array(x, dtype=float)
    r = f(x)
    cost = 0.5 * r @ r
    mu, nu, how = None, 2.0, "iterations"
    for it in range(1, max_iterations + 1):
        J = np.empty((len(r), len(x)))
        for j in range(len(x)):
            h = 1e-5 * max(1.0, abs(x[j]))
            xj = x.copy()
            xj[j] += h
            J[:, j] = (f(xj) - r) / h
        A, g = J.T @ J, J.T @ r
        if np.abs(g).max() <= 1e-8 * math.sqrt(2 * cost * A.diagonal().max()):
            return x, it, evals[0], "gradient"
        mu = 1e-3 * A.diagonal().max() if mu is None else mu
        while True:
            D = np.diag(np.maximum(A.diagonal(), 1e-300))
            step = np.linalg.solve(A + mu * D, -g)
            trial = x + step
            trial[:k] = np.maximum(trial[:k], 0.0)
            step = trial - x
            small = np.linalg.norm(step) <= 1e-7 * (np.linalg.norm(x) + 1e-7)
            r_new = f(trial)
            cost_new = 0.5 * r_new @ r_new
            predicted = 0.5 * step @ (mu * D @ step - g)
            rho = (cost - cost_new) / predicted if predicted > 0 else -1.0
            if rho > 0:
                done = cost - cost_new <= 1e-10 * cost or small
                x, r, cost = trial, r_new, cost_new
                mu *= max(1 / 3, 1 - (2 * rho - 1) ** 3)
                nu = 2.0
                if done:
                    return x, it, evals[0], "settled"
                break
            if small:
                return x, it, evals[0], "no smaller step"
            mu *= nu
            nu *= 2.0
            if mu > 1e16:
                return x, it, evals[0], "mu"
    return x, max_iterations, evals[0], "iterations"


WORDS = {"gradient": "the gradient vanished",
         "settled": "the last step changed the fit by less than its tolerance",
         "no smaller step": "no smaller step lowers the misfit"}


@pytest.mark.parametrize("names", [["damping"], ["damping", "inertia"]])
def test_the_fit_takes_the_published_levenberg_marquardt_path(names):
    # The same residuals (the fit's own model of the log) minimised by algorithm 3.16 as
    # written out above: the same numbers (1e-9 relative; both solve the same linear systems,
    # numpy by LAPACK), the same count of iterations and of simulations (the final run of the
    # fitted numbers is the fit's one more), and the same way of stopping, in its words.
    decay = fitted_decay()
    rig, log = decay["rig"], decay["log"]
    paths = parameter_paths(rig, names)
    model = _Model(rig, log, paths, _scales(rig, paths))
    q = [row[0] for row in log.angles_rad]
    x0 = [fitting._get(rig, p) / s for p, s in zip(paths, model.scales)] + \
        [q[0], (-3 * q[0] + 4 * q[1] - q[2]) / (2 * log.step_s)]
    x, iterations, runs, how = madsen_lm(model.residuals, x0, len(paths))
    res = decay["res"] if names == ["damping"] else fit(rig, log, names)
    assert res.values == pytest.approx([v * s for v, s in zip(x, model.scales)], rel=1e-9)
    assert (res.iterations, res.work["simulations"]) == (iterations, runs + 1)
    assert res.message == WORDS[how]
