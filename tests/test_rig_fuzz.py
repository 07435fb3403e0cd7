"""The rig loader under hostile input: it never crashes, and every rejection names the field.

Rules checked (shared/design/architecture.md rig file v1; rules.md "bad input gets
a clear error naming the field, the value and what is allowed; nothing the user
typed or loaded is lost"). Paths are JSON paths like links[0].length_m.
"""
import copy
import math
import re

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import refsolvers as ref
import shakestill as ss

# a JSON path: names joined by dots, each with list indexes [3] or, for a key that is not a
# plain name, the key quoted as JSON ["2 x"] (nested lists and odd keys need both)
_INDEX = r'(\[\d+\]|\["(?:[^"\\]|\\.)*"\])'
PATH = re.compile(rf"^([A-Za-z_][A-Za-z0-9_]*|{_INDEX}){_INDEX}*(\.[A-Za-z_][A-Za-z0-9_]*{_INDEX}*)*$")
FUZZ = settings(max_examples=300, deadline=None, suppress_health_check=list(HealthCheck))

json_values = st.recursive(
    st.none() | st.booleans() | st.integers(-10 ** 6, 10 ** 6) | st.floats(allow_nan=True)
    | st.text(max_size=12),
    lambda inner: st.lists(inner, max_size=5) | st.dictionaries(st.text(max_size=12), inner, max_size=6),
    max_leaves=25,
)


def load(data):
    """rig_from_dict, or the RigError's problems; any other exception fails the test."""
    try:
        return ss.rig_from_dict(data), None
    except ss.RigError as err:
        return None, list(err.problems)


def assert_problems_well_formed(problems, root_ok=False):
    assert problems, "RigError without problems"
    for p in problems:
        assert isinstance(p.message, str) and p.message.strip(), p
        assert isinstance(p.path, str)
        if not (root_ok and p.path in ("", "$", "(rig)")):  # the whole file
            assert PATH.match(p.path), f"not a field path: {p.path!r}"


def base_rig(waveform="crank"):
    drives = {"crank": ref.crank(0.02, 0.06, 2400.0), "sine": ref.sine(0.02, 2400.0),
              "samples": ref.samples([0.01 * math.cos(2 * math.pi * k / 16) for k in range(16)],
                                     2400.0)}
    return ref.rig([ref.link(0.30, 0.05, [(0.02, 0.30)], 0.0, 2e-4),
                    ref.link(0.10, 0.02, [(0.01, 0.08)], 1e-6, 1e-4)], drives[waveform],
                   limits={"speed_rpm": [300.0, 3600.0], "stroke_m": [0.0, 0.04]})


def set_path(data, path, value):
    node = data
    parts = re.findall(r"[^.\[\]]+|\[\d+\]", path)
    for part in parts[:-1]:
        node = node[int(part[1:-1])] if part.startswith("[") else node[part]
    last = parts[-1]
    if last.startswith("["):
        node[int(last[1:-1])] = value
    else:
        node[last] = value


def rejected_at(data, paths, value=None):
    """Loading fails with a problem at one of `paths` whose message shows the value."""
    rig, problems = load(data)
    assert rig is None, f"accepted bad input at {paths}"
    assert_problems_well_formed(problems)
    hits = [p for p in problems if p.path in paths]
    assert hits, f"no problem at {paths}: {[(p.path, p.message) for p in problems]}"
    if value is not None:
        text = " ".join(p.message.lower() for p in hits)
        assert any(v in text for v in value), (value, [p.message for p in hits])


NUMERIC = ["g_m_s2", "links[0].length_m", "links[0].rod_mass_kg", "links[1].extra_inertia_kg_m2",
           "links[0].joint_damping_N_m_s", "links[1].joint_friction_N_m",
           "links[0].point_masses[0].mass_kg", "links[1].point_masses[0].at_m",
           "drive.stroke_m", "drive.rod_length_m", "drive.speed_rpm",
           "limits.speed_rpm[1]", "limits.stroke_m[1]"]


@FUZZ
@given(json_values)
def test_any_json_value_is_loaded_or_rejected_cleanly(value):
    # No input crashes the loader: a Rig or a RigError with named problems.
    rig, problems = load(value)
    if rig is None:
        assert_problems_well_formed(problems, root_ok=not isinstance(value, dict))


@FUZZ
@given(st.sampled_from(NUMERIC + ["links[0].point_masses", "drive.waveform", "drive", "links",
                                  "limits", "title", "format", "version", "links[1]"]),
       json_values)
def test_any_field_replaced_by_anything(path, value):
    # One field of a valid file replaced by any JSON value: accepted, or rejected
    # with a problem at that field or inside it (a path that starts with it).
    data = base_rig()
    set_path(data, path, value)
    rig, problems = load(data)
    if rig is None:
        assert_problems_well_formed(problems)
        assert any(related(p.path, path) for p in problems), (
            path, value, [(p.path, p.message) for p in problems])


def related(problem_path, path):
    # The field itself, something inside it, or a sibling in the same object (a
    # length shrunk below a point mass may be reported at the point mass); limits
    # may be reported against the operating point in drive.
    if problem_path == path or problem_path.startswith((path + ".", path + "[")):
        return True
    parent = re.sub(r"(\.[A-Za-z_0-9]+|\[\d+\])$", "", path)
    if parent != path and (problem_path == parent
                           or problem_path.startswith((parent + ".", parent + "["))):
        return True
    return path.startswith("limits") and problem_path.startswith("drive.")


@pytest.mark.parametrize("path", NUMERIC)
@pytest.mark.parametrize("bad", [math.nan, math.inf, -math.inf], ids=["nan", "inf", "-inf"])
def test_non_finite_numbers_rejected(path, bad):
    # NaN and infinities are never a physical value (common practice, no source).
    data = base_rig()
    set_path(data, path, bad)
    rejected_at(data, {path, path.split("[")[0] if path.startswith("limits") else path},
                value=("nan",) if math.isnan(bad) else ("inf",))


@pytest.mark.parametrize("path", ["links[0].length_m", "links[1].length_m"])
@pytest.mark.parametrize("bad", [-0.3, 0.0])
def test_non_positive_lengths_rejected(path, bad):
    # A link has a positive length (contract: rigid links).
    data = base_rig()
    set_path(data, path, bad)
    rejected_at(data, {path}, value=("-0.3",) if bad < 0 else None)


@pytest.mark.parametrize("path", ["links[0].rod_mass_kg", "links[0].point_masses[0].mass_kg",
                                  "links[1].extra_inertia_kg_m2", "links[0].joint_damping_N_m_s"])
def test_negative_masses_inertias_damping_rejected(path):
    data = base_rig()
    set_path(data, path, -0.01)
    rejected_at(data, {path}, value=("-0.01",))


@pytest.mark.parametrize("at", [0.31, -0.01])
def test_point_mass_outside_its_link_rejected(at):
    # point_masses[].at_m is measured from the link's own joint (contract): 0 <= at <= L.
    data = base_rig()
    data["links"][0]["point_masses"][0]["at_m"] = at
    rejected_at(data, {"links[0].point_masses[0].at_m"}, value=(str(at),))


@pytest.mark.parametrize("rod", [0.01, 0.005])
def test_crank_radius_not_below_rod_rejected(rod):
    # Slider-crank needs r = stroke/2 < l (the square root of the contract's formula).
    data = base_rig()
    data["drive"]["rod_length_m"] = rod
    rejected_at(data, {"drive.rod_length_m", "drive.stroke_m"})


@pytest.mark.parametrize("count", [0, 1, 7])
def test_fewer_than_eight_samples_rejected(count):
    data = base_rig("samples")
    data["drive"]["samples_m"] = [0.01 * math.cos(2 * math.pi * k / 7) for k in range(count)]
    rejected_at(data, {"drive.samples_m"})


def test_eight_samples_accepted():
    # The boundary of the rule above.
    data = base_rig("samples")
    data["drive"]["samples_m"] = [0.01 * math.cos(2 * math.pi * k / 8) for k in range(8)]
    rig, problems = load(data)
    assert problems is None


@pytest.mark.parametrize("field,bad", [("format", "some-other-rig"), ("format", None),
                                       ("version", 2), ("version", "1x"), ("version", 0)])
def test_wrong_format_or_version_rejected(field, bad):
    data = base_rig()
    data[field] = bad
    rejected_at(data, {field})


@pytest.mark.parametrize("count", [0, 4])
def test_link_count_outside_one_to_three_rejected(count):
    data = base_rig()
    data["links"] = [copy.deepcopy(data["links"][1]) for _ in range(count)]
    rejected_at(data, {"links"})


def test_every_problem_reported_at_once():
    # The loader collects every problem with its path (DEVELOPERS.md, rig.py).
    data = base_rig()
    data["links"][0]["length_m"] = -1.0
    data["links"][1]["rod_mass_kg"] = math.nan
    data["drive"]["speed_rpm"] = "fast"
    _, problems = load(data)
    paths = {p.path for p in problems}
    assert {"links[0].length_m", "links[1].rod_mass_kg", "drive.speed_rpm"} <= paths, paths


@pytest.mark.parametrize("path", ["notes_x", "links[0].colour_x", "drive.motor_x",
                                  "links[1].point_masses[0].label_x"])
def test_unknown_fields_warn_and_are_kept(path):
    # Unknown fields are a warning naming the path, not dropped (contract: extend,
    # never rename; rules.md: nothing the user loaded is lost).
    data = base_rig()
    set_path(data, path, "kept")
    rig, warnings = ss.rig_from_dict(data, with_warnings=True)
    assert any(w.path == path for w in warnings), [(w.path, w.message) for w in warnings]
    assert ss.rig_to_dict(rig) == data


@pytest.mark.parametrize("path,text,value", [
    ("drive.stroke_m", "25 mm", 0.025),          # 1 mm = 1e-3 m (SI)
    ("drive.speed_rpm", "1800 rpm", 1800.0),
    ("drive.speed_rpm", "40 Hz", 2400.0),         # one cycle per revolution (contract)
    ("links[0].length_m", "30 cm", 0.30),
])
def test_numbers_with_units_become_si(path, text, value):
    # DEVELOPERS.md: any number may be a string with a unit; the core converts it.
    data = base_rig()
    set_path(data, path, text)
    saved = ss.rig_to_dict(ss.rig_from_dict(data))
    node = saved
    for part in re.findall(r"[^.\[\]]+|\[\d+\]", path):
        node = node[int(part[1:-1])] if part.startswith("[") else node[part]
    assert abs(node - value) <= 1e-12 * value


def test_bad_unit_rejected_naming_field_and_value():
    data = base_rig()
    data["drive"]["stroke_m"] = "25 furlongs"
    rejected_at(data, {"drive.stroke_m"}, value=("furlong",))
