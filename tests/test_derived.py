"""The derived model record (model/derived.py): its matrices against numpy, its moves
along a scan, and the promise that one analysis derives the rig's model once."""
import numpy as np
from hypothesis import HealthCheck, given, settings

import refsolvers as ref
import shakestill as ss
from shakestill.model import derived
from shakestill.model import drive as drv
from shakestill.model.rig import MIN_LINK_M

SETTINGS = settings(max_examples=40, deadline=None, derandomize=True,
                    suppress_health_check=[HealthCheck.too_slow])


@SETTINGS
@given(ref.st_rig())
def test_first_order_matrices_and_rates_match_numpy(data):
    # B = M^-1 K and C = M^-1 D from the chain's Lagrangian (refsolvers.chain_matrices)
    # by numpy.linalg.solve; the rates are max |eig| by numpy.linalg.eigvals.
    # 1e-9 relative to each matrix's largest entry (M can be ill-conditioned by 1e3).
    try:
        model = derived.derive(ss.rig_from_dict(data))
    except ss.RigError as refused:
        # refused only for a sway mode shorter than the model resolves: the shortest
        # equivalent length 1 / max eig(M^-1 K) by numpy under MIN_LINK_M
        M, _, K = ref.chain_matrices(data, "hanging")
        shortest = 1.0 / np.max(np.abs(np.linalg.eigvals(np.linalg.solve(M, K))))
        assert shortest < MIN_LINK_M, refused
        return
    for eq in ("inverted", "hanging"):
        M, D, K = ref.chain_matrices(data, eq)
        want_b, want_c = np.linalg.solve(M, K), np.linalg.solve(M, D)
        got = model.of(eq)
        for g_, w_ in ((got.B, want_b), (got.C, want_c)):
            scale = max(np.max(np.abs(w_)), 1e-300)
            assert np.max(np.abs(np.asarray(g_) - w_)) <= 1e-9 * scale
        stiff = np.max(np.abs(np.linalg.eigvals(want_b)))
        assert abs(got.stiffness_rate - stiff) <= 1e-9 * stiff
        if model.damped:
            damp = np.max(np.abs(np.linalg.eigvals(want_c)))
            assert abs(got.damping_rate - damp) <= 1e-9 * max(damp, 1e-300)
        else:
            assert got.damping_rate == 0.0


def test_moving_the_operating_point_keeps_the_links_and_redoes_the_harmonics():
    # Model.at: the links' part is the same object; the harmonics equal
    # drive.harmonics of the moved drive (identity of the record's own function, and
    # for the crank the cosine series, checked against numpy's FFT in test_ref_crank).
    model = derived.derive(ss.demo_rig())
    faster = model.at(speed_rpm=3000)
    assert faster.inverted is model.inverted and faster.properties is model.properties
    assert faster.harmonics is model.harmonics  # the cycle's shape does not depend on speed
    assert faster.rig.drive.speed_rpm == 3000.0
    longer = model.at(stroke_m=0.03)
    want = drv.harmonics(ss.with_operating_point(ss.demo_rig(), stroke_m=0.03).drive)
    assert longer.harmonics == want and longer.harmonics != model.harmonics
    assert model.at() is model


def test_stability_of_a_model_equals_stability_of_its_rig():
    # The public API takes either; the verdicts and multipliers agree exactly
    # (the same arithmetic), at the operating point and moved along a scan.
    rig = ss.rig_from_dict(ref.rig([ref.link(0.25, 0.05, [(0.1, 0.25)], damping=2e-4),
                                    ref.link(0.12, 0.02, [(0.01, 0.12)])],
                                   ref.sine(0.02, 2400)))
    model = derived.derive(rig)
    for eq in ("inverted", "hanging"):
        for speed in (None, 1800.0):
            a = ss.stability(rig, eq, speed_rpm=speed)
            b = ss.stability(model, eq, speed_rpm=speed)
            assert a.multipliers == b.multipliers and a.stable == b.stable


def test_a_check_derives_the_rig_once(monkeypatch):
    # The rule: one derivation per analysis, handed down (count of chain()
    # calls made through derive during a full check of a two-link rig: exactly 1).
    calls = []
    real = derived.chain
    monkeypatch.setattr(derived, "chain", lambda rig: calls.append(1) or real(rig))
    data = ss.demo_rig_dict()
    data["links"].append({"length_m": 0.12, "rod_mass_kg": 0.02,
                          "point_masses": [{"mass_kg": 0.01, "at_m": 0.12}]})
    ss.check(ss.rig_from_dict(data))
    assert len(calls) == 1
