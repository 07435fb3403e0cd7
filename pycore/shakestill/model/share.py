"""Share links: the whole rig and view state in a URL fragment, compact and versioned.

Fragment form: ``s1.<base64url of zlib-compressed JSON>``. zlib's Adler-32
checksum makes a damaged link fail loudly instead of opening another rig.
The fragment never reaches a server (browsers do not send it).
"""

from __future__ import annotations

import base64
import binascii
import json
import zlib

from .rig import Problem, RigError
from .rigfile import rig_from_dict, rig_to_dict
from .safejson import loads_json

PREFIX = "s1."
MAX_FRAGMENT = 200_000  # characters; a rig file is a few hundred bytes compressed
MAX_INFLATED = 2_000_000  # bytes; refuse decompression bombs
MAX_RESULT_CHARS = 60_000  # a check's result rides along only while the link stays short


def encode(rig_data: dict, view: dict | None = None, result: dict | None = None) -> str:
    """The fragment (without '#') for a rig file object, optional view state and optional
    result: the check the sender's page computed for exactly this rig, shown by the
    receiving page (marked as the sender's) until its own engine has checked the rig."""
    rig = rig_from_dict(rig_data)  # only valid rigs are shared
    payload = {"rig": rig_to_dict(rig), "view": view or {}}
    if isinstance(result, dict):
        text = json.dumps(result, separators=(",", ":"), allow_nan=False)
        if len(text) <= MAX_RESULT_CHARS:
            payload["result"] = result
    raw = json.dumps(payload, separators=(",", ":"), sort_keys=True).encode()
    packed = zlib.compress(raw, 9)
    return PREFIX + base64.urlsafe_b64encode(packed).decode().rstrip("=")


def _refuse(message: str) -> RigError:
    return RigError([Problem("(link)", message)])


def decode(fragment: str) -> tuple[dict, dict]:
    """(rig file object, view) from a fragment; raises RigError saying what is wrong."""
    if not isinstance(fragment, str):
        raise _refuse("the link's fragment is not text")
    text = fragment.strip()
    if "#" in text:
        text = text.rsplit("#", 1)[1]
    if not text.startswith(PREFIX):
        raise _refuse("this is not a Shakestill rig link (it should start with #s1.)")
    if len(text) > MAX_FRAGMENT:
        raise _refuse("this link is far too long to be a rig link")
    body = text[len(PREFIX):]
    try:
        # validate: a character outside the alphabet is damage, not something to skip
        packed = base64.b64decode(body + "=" * (-len(body) % 4), altchars=b"-_", validate=True)
        d = zlib.decompressobj()
        raw = d.decompress(packed, MAX_INFLATED)
        if d.unconsumed_tail or not d.eof:
            raise ValueError("truncated or oversized")
        text = raw.decode("utf-8")
    except (binascii.Error, ValueError, zlib.error, UnicodeDecodeError):
        raise _refuse("this link is damaged or incomplete (its checksum or encoding does not "
                      "match); ask for the link again") from None
    payload = loads_json(text, "(link)")  # bounded: depth, sizes, finite numbers by path
    if not isinstance(payload, dict) or not isinstance(payload.get("rig"), dict):
        raise _refuse("this link holds no rig")
    view = payload.get("view", {})
    if not isinstance(view, dict):
        raise _refuse("this link's view settings are not readable")
    rig_from_dict(payload["rig"])  # the rig inside must be valid, or say why
    return payload["rig"], view
