"""Property tests (hypothesis) on valid rig files: derived properties, M/D/K, round trips."""
import copy
import json

import numpy as np
from hypothesis import HealthCheck, given, settings

import refsolvers as ref
import shakestill as ss

SETTINGS = settings(max_examples=60, deadline=None,
                    suppress_health_check=[HealthCheck.too_slow])


def rel_close(got, want, rel):
    return abs(got - want) <= rel * abs(want)


@SETTINGS
@given(ref.st_rig())
def test_properties_match_parallel_axis_sums(data):
    # ss.properties against refsolvers.properties: point masses, rods (m L^2/3),
    # parallel-axis theorem with all links aligned, lowest root of
    # det(g K - w^2 M) = 0 (scipy.linalg.eigh); 1e-10 relative (1e-9 frequency).
    got = ss.properties(ss.rig_from_dict(data))
    want = ref.properties(data)
    for key in ("total_mass_kg", "first_moment_kg_m", "inertia_about_pivot_kg_m2", "l_eq_m"):
        assert rel_close(getattr(got, key), want[key], 1e-10), (key, getattr(got, key), want[key])
    assert len(got.link_mass_kg) == len(want["link_mass_kg"])
    for g_, w_ in zip(got.link_mass_kg, want["link_mass_kg"]):
        assert rel_close(g_, w_, 1e-12)
    assert rel_close(got.hanging_frequency_hz, want["hanging_frequency_hz"], 1e-9)


@SETTINGS
@given(ref.st_rig())
def test_linearise_matches_lagrangian_on_any_rig(data):
    # ss.linearise against the chain's Lagrangian (refsolvers.chain_matrices), both
    # equilibria; 1e-10 relative to each matrix's largest entry.
    rig = ss.rig_from_dict(data)
    for eq in ("inverted", "hanging"):
        lin = ss.linearise(rig, eq)
        for got, want in zip((lin.M, lin.D, lin.K), ref.chain_matrices(data, eq)):
            scale = max(np.max(np.abs(want)), 1e-300)
            assert np.max(np.abs(np.asarray(got, dtype=float) - want)) <= 1e-10 * scale


@SETTINGS
@given(ref.st_rig())
def test_full_file_round_trips_exactly(data):
    # A file that gives every v1 field, loaded and saved again, is the same file
    # (DEVELOPERS.md: "round-trips a loaded file exactly"); equality, no tolerance,
    # also through JSON text.
    original = copy.deepcopy(data)
    saved = ss.rig_to_dict(ss.rig_from_dict(data))
    assert data == original, "the loader changed its input"
    assert saved == original
    assert ss.rig_to_dict(ss.rig_from_dict(json.loads(json.dumps(saved)))) == original


@SETTINGS
@given(ref.st_rig())
def test_minimal_file_keeps_every_given_value(data):
    # Optional numbers left out default to 0 and g to 9.80665 (contract); saving is
    # idempotent and keeps every value the user gave; equality.
    minimal = copy.deepcopy(data)
    minimal.pop("g_m_s2")
    minimal.pop("title")
    for lk in minimal["links"]:
        for key in ("extra_inertia_kg_m2", "joint_damping_N_m_s", "joint_friction_N_m"):
            if lk[key] == 0.0:
                lk.pop(key)
        if not lk["point_masses"]:
            lk.pop("point_masses")
    once = ss.rig_to_dict(ss.rig_from_dict(minimal))
    assert ss.rig_to_dict(ss.rig_from_dict(once)) == once
    for key, value in minimal.items():
        if key != "links":
            assert once[key] == value, key
    for lk_in, lk_out in zip(minimal["links"], once["links"]):
        for key, value in lk_in.items():
            assert lk_out[key] == value, key
    assert ss.properties(ss.rig_from_dict(minimal)) == ss.properties(
        ss.rig_from_dict(dict(data, g_m_s2=ref.G_STANDARD)))
