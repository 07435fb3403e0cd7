"""Damaged inputs for the fuzz harness (tests/test_entry_fuzz.py and bench/fuzz_long.py):
a valid rig file, share link or log with bytes flipped, inserted, deleted, cut or swapped
for hostile values. Deterministic for a given random.Random."""

from __future__ import annotations

import base64
import json
import math
import random
import zlib

import shakestill as ss
from shakestill.model import share

HOSTILE = [b"NaN", b"Infinity", b"-1e400", b"9" * 400, b"[" * 64, b"\"\xe9\"", b"null",
           b"{}", b"[]", b"\"25 furlongs\"", b"-0", b"1e-320", b"\"\"", b"true", b"0"]


def rig_text() -> bytes:
    return json.dumps(ss.demo_rig_dict(), indent=1).encode()


def two_link_text() -> bytes:
    data = ss.demo_rig_dict()
    data["links"].append({"length_m": 0.12, "rod_mass_kg": 0.02,
                          "point_masses": [{"mass_kg": 0.01, "at_m": 0.12}],
                          "joint_damping_N_m_s": 1e-4})
    return json.dumps(data, indent=1).encode()


def log_text() -> bytes:
    rows = ["t_s,angle_deg"] + [f"{k / 100:.2f},{20 * math.exp(-k / 300) * math.cos(k / 7):.4f}"
                                for k in range(120)]
    return ("\n".join(rows) + "\n").encode()


def link_text() -> str:
    return "#" + share.encode(ss.demo_rig_dict())


def damage(data: bytes, rnd: random.Random) -> bytes:
    """One to four random edits of ``data``."""
    out = bytearray(data)
    for _ in range(rnd.randint(1, 4)):
        kind = rnd.randrange(6)
        at = rnd.randrange(len(out) + 1) if out else 0
        if kind == 0 and out:  # flip a byte
            out[min(at, len(out) - 1)] = rnd.randrange(256)
        elif kind == 1:  # insert bytes
            out[at:at] = bytes(rnd.randrange(256) for _ in range(rnd.randint(1, 8)))
        elif kind == 2 and out:  # delete a run
            del out[at:at + rnd.randint(1, 16)]
        elif kind == 3:  # cut the end
            del out[at:]
        elif kind == 4:  # a hostile value where a number was
            digits = [i for i, b in enumerate(out) if 48 <= b <= 57]
            if digits:
                i = rnd.choice(digits)
                j = i
                while j < len(out) and (48 <= out[j] <= 57 or out[j] in b".eE-+"):
                    j += 1
                out[i:j] = rnd.choice(HOSTILE)
        else:  # duplicate a run (deep or long structures)
            run = out[at:at + rnd.randint(1, 64)]
            out[at:at] = bytes(run) * rnd.randint(1, 50)
    return bytes(out)


def damaged_link(rnd: random.Random) -> str:
    """A share link damaged in its text, or a well-formed link around a damaged rig."""
    if rnd.random() < 0.5:
        return damage(link_text().encode(), rnd).decode("latin-1")
    payload = damage(json.dumps({"rig": ss.demo_rig_dict(), "view": {}}).encode(), rnd)
    return "#s1." + base64.urlsafe_b64encode(zlib.compress(payload, 9)).decode().rstrip("=")


# ---------------------------------------------------------------- numbers changed, shape kept
# A rig file whose shape is intact but whose numbers are anything: most such files load, so
# the analyses themselves (not only the reader) meet extreme, tiny, negative and odd values.

LINK_NUMBERS = ("length_m", "rod_mass_kg", "extra_inertia_kg_m2", "joint_damping_N_m_s",
                "joint_friction_N_m")
SCALES = tuple(10.0 ** k for k in range(-9, 10, 3))  # the original times 1e-9 .. 1e9
ODD = (0.0, -0.0, -1.0, 1e-300, 5e-324, 1e300, math.inf, math.nan, 2 ** 53 + 1.0)


def number_paths(data: dict) -> list[tuple]:
    """Where the numbers of a rig dict sit, as key paths."""
    paths = [("g_m_s2",), ("drive", "stroke_m"), ("drive", "speed_rpm"),
             ("limits", "speed_rpm", 0), ("limits", "speed_rpm", 1),
             ("limits", "stroke_m", 0), ("limits", "stroke_m", 1)]
    if "rod_length_m" in data["drive"]:
        paths.append(("drive", "rod_length_m"))
    for i, link in enumerate(data["links"]):
        paths += [("links", i, key) for key in LINK_NUMBERS if key in link]
        for j, _ in enumerate(link.get("point_masses", [])):
            paths += [("links", i, "point_masses", j, "mass_kg"),
                      ("links", i, "point_masses", j, "at_m")]
    return paths


def renumbered(data: dict, changes) -> dict:
    """A copy of ``data`` with each (path, how) applied: how is ("scale", factor),
    ("odd", value) or ("waveform", name)."""
    out = json.loads(json.dumps(data))
    for path, (kind, value) in changes:
        if kind == "waveform":
            out["drive"]["waveform"] = value
            continue
        holder = out
        for key in path[:-1]:
            holder = holder[key]
        holder[path[-1]] = holder[path[-1]] * value if kind == "scale" else value
    return out


def random_changes(data: dict, rnd: random.Random) -> list:
    paths = number_paths(data)
    changes = []
    for _ in range(rnd.randint(1, 4)):
        roll = rnd.random()
        if roll < 0.7:
            changes.append((rnd.choice(paths), ("scale", rnd.choice(SCALES) * rnd.uniform(0.5, 2))))
        elif roll < 0.9:
            changes.append((rnd.choice(paths), ("odd", rnd.choice(ODD))))
        else:
            changes.append(((), ("waveform", rnd.choice(("sine", "crank")))))
    return changes


def rig_bytes(data: dict) -> bytes:
    """The rig file's bytes as a user's tool might write them (NaN and Infinity included)."""
    return json.dumps(data, indent=1, allow_nan=True).encode()
