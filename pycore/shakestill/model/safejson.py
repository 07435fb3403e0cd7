"""Text and JSON from outside, read with bounds before anything deep happens.

Every entry point (rig files, standard input, share links, bridge requests, CSV
logs) goes through here: bytes must be UTF-8 (a byte-order mark is allowed and
dropped), and a JSON document is bounded in size, nesting depth, string and
array length and number size before and while it is parsed; a number that is
not a finite float (NaN, Infinity, a 400-digit integer) is refused where it
sits, with its path, wherever it is in the document, unknown fields included.
"""

from __future__ import annotations

import json
import math
import re

from .rig import Problem, RigError

MAX_TEXT_CHARS = 5_000_000  # a rig file is a few kB; a long log a few MB
MAX_DEPTH = 32  # a rig file nests 4 deep; a bridge request 6
MAX_STRING_CHARS = 4_000_000  # a pasted log travels as one string in a request
MAX_ARRAY_ITEMS = 100_000  # samples_m, a speed table
_NAME = re.compile(r"[A-Za-z_][A-Za-z0-9_]*")  # keys that need no quoting in a path
MAX_INT_DIGITS = 30  # beyond any number a rig can need, far below float overflow


def decode_text(data: bytes, where: str) -> str:
    """UTF-8 text (with or without a byte-order mark), or a RigError naming ``where``."""
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise RigError([Problem(where, f"the text is not UTF-8: byte 0x{data[exc.start]:02X} at "
                                       f"position {exc.start} cannot be read; save the file as "
                                       "UTF-8 (most editors offer it under 'Save as')")]) from None
    return text


class _Refused:
    """A value refused while parsing; the walk reports it with its path."""

    def __init__(self, why: str):
        self.why = why


def _int(text: str):
    digits = text.lstrip("-")
    if len(digits) > MAX_INT_DIGITS:
        return _Refused(f"a {len(digits)}-digit number is not allowed: numbers must be finite "
                        "and of a size a rig can have")
    return int(text)


def _float(text: str):
    value = float(text)
    if not math.isfinite(value):
        return _Refused(f"{text[:20]} is not allowed: numbers must be finite")
    return value


def _constant(name: str):
    return _Refused(f"{name} is not allowed: numbers must be finite")


def _deepest(text: str) -> int:
    """The deepest nesting of [ and { outside strings (a linear scan, no recursion)."""
    depth = most = 0
    in_string = escaped = False
    for ch in text:
        if in_string:
            if escaped:
                escaped = False
            elif ch == "\\":
                escaped = True
            elif ch == '"':
                in_string = False
        elif ch == '"':
            in_string = True
        elif ch in "[{":
            depth += 1
            if depth > most:
                most = depth
                if most > MAX_DEPTH:
                    return most
        elif ch in "]}":
            depth -= 1
    return most


def child_path(path: str, key) -> str:
    """``path.key``, or ``path["key"]`` for a key that is not a plain name."""
    key = str(key)
    if not _NAME.fullmatch(key):
        return f"{path}[{json.dumps(key[:40])}]"
    return f"{path}.{key}" if path else key


def _walk(value, path: str, problems: list[Problem]) -> None:
    if isinstance(value, _Refused):
        problems.append(Problem(path or "(file)", value.why))
    elif isinstance(value, dict):
        for key, item in value.items():
            _walk(item, child_path(path, key), problems)
    elif isinstance(value, list):
        if len(value) > MAX_ARRAY_ITEMS:
            problems.append(Problem(path or "(file)", f"a list of {len(value)} items is not "
                                                       f"allowed: at most {MAX_ARRAY_ITEMS}"))
            return
        for i, item in enumerate(value):
            _walk(item, f"{path}[{i}]", problems)
    elif isinstance(value, str) and len(value) > MAX_STRING_CHARS:
        problems.append(Problem(path or "(file)", f"a text of {len(value)} characters is not "
                                                   f"allowed here: at most {MAX_STRING_CHARS}"))


def loads_json(text: str, where: str = "(file)", *, prefix: str = ""):
    """Parse JSON text within the bounds above; RigError names every refused value's path
    (``prefix`` is put before each path, e.g. "rig." for a request's rig)."""
    if len(text) > MAX_TEXT_CHARS:
        raise RigError([Problem(where, f"{len(text)} characters is too long: at most "
                                       f"{MAX_TEXT_CHARS}")])
    if _deepest(text) > MAX_DEPTH:
        raise RigError([Problem(where, f"nested more than {MAX_DEPTH} levels deep: not a rig "
                                       "file or request")])
    try:
        data = json.loads(text, parse_int=_int, parse_float=_float, parse_constant=_constant)
    except json.JSONDecodeError as exc:
        raise RigError([Problem(where, f"not valid JSON: {exc.msg} at line {exc.lineno}, "
                                       f"column {exc.colno}")]) from None
    except (ValueError, RecursionError) as exc:  # int digit limit, or a parser's own limit
        raise RigError([Problem(where, f"not readable as JSON: {exc}")]) from None
    problems: list[Problem] = []
    _walk(data, prefix.rstrip("."), problems)
    if problems:
        raise RigError(problems)
    return data


def non_finite_problems(data, prefix: str = "", root: str = "(rig)") -> list[Problem]:
    """A problem for every float in ``data`` (already parsed) that is NaN or infinite;
    paths start with ``prefix``, and the document itself is called ``root``."""
    problems: list[Problem] = []

    def walk(value, path: str, depth: int) -> None:
        if isinstance(value, float) and not math.isfinite(value):
            problems.append(Problem(path or root, f"{value} is not allowed: numbers must be "
                                                  "finite"))
        elif depth > MAX_DEPTH:
            problems.append(Problem(path or root, f"nested more than {MAX_DEPTH} levels deep"))
        elif isinstance(value, dict):
            for key, item in value.items():
                walk(item, child_path(path, key), depth + 1)
        elif isinstance(value, (list, tuple)):
            for i, item in enumerate(value):
                walk(item, f"{path}[{i}]", depth + 1)

    walk(data, prefix, 0)
    return problems
