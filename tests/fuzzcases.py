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
