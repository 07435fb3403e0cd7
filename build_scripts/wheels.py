"""The wheels the site ships: pinned ones from PyPI, and the core's own.

Pinned wheels are fetched once with pip into build/cache/ and checked
against their pinned sha256 every time they are used. The core's wheel is
built by the pinned setuptools backend from a clean copy of the sources with
normalised file modes and a fixed SOURCE_DATE_EPOCH, so the same sources give
the same bytes.
"""

from __future__ import annotations

import hashlib
import os
import shutil
import subprocess
import sys
import tempfile
import tomllib
from pathlib import Path

import pins

TOP = Path(__file__).resolve().parent.parent
CACHE = TOP / "build" / "cache"


def sha256_of(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def _pip_download(name: str, version: str, sha256: str, dest: Path) -> None:
    """pip download one wheel, hash-checked by pip itself (--require-hashes)."""
    dest.mkdir(parents=True, exist_ok=True)
    with tempfile.TemporaryDirectory() as tmp:
        req = Path(tmp) / "requirements.txt"
        req.write_text(f"{name}=={version} --hash=sha256:{sha256}\n")
        subprocess.run(
            [sys.executable, "-m", "pip", "download", "--quiet", "--no-deps",
             "--only-binary=:all:", "--platform", "any", "--implementation", "py",
             "--python-version", "3.14", "--require-hashes", "-r", str(req),
             "-d", str(dest)],
            check=True,
        )


def pinned_wheel(name: str, version: str, sha256: str, cache: Path = CACHE) -> Path:
    """Path of the pinned wheel in the cache, fetched if missing; its hash verified."""
    path = cache / "wheels" / pins.wheel_file_name(name, version)
    if not path.exists() or sha256_of(path) != sha256:
        _pip_download(name, version, sha256, path.parent)
    actual = sha256_of(path)
    if actual != sha256:
        raise SystemExit(f"{path.name}: sha256 {actual} is not the pinned {sha256}")
    return path


def _backend(cache: Path = CACHE) -> Path:
    """Folder holding the pinned setuptools, installed from its hash-checked wheel."""
    name, version, sha256 = pins.BUILD_BACKEND
    target = cache / f"backend-{name}-{version}"
    if not (target / name).is_dir():
        wheel = pinned_wheel(name, version, sha256, cache)
        if target.exists():
            shutil.rmtree(target)
        subprocess.run(
            [sys.executable, "-m", "pip", "install", "--quiet", "--no-deps",
             "--no-compile", "--target", str(target), str(wheel)],
            check=True,
        )
    return target


def fetch_pinned(cache: Path = CACHE) -> None:
    """Every pinned wheel and the build backend in the cache, fetched if missing: run before two
    builds start side by side (build_scripts/test.sh), so they never fetch the same file at once."""
    for name, (version, sha256) in sorted(pins.WHEELS.items()):
        pinned_wheel(name, version, sha256, cache)
    _backend(cache)


def _clean_source_copy(src: Path, dest: Path) -> None:
    """Copy what the wheel is built from, without caches, with fixed modes."""
    dest.mkdir()
    for name in ("pyproject.toml", "README.md"):
        shutil.copyfile(src / name, dest / name)
    ignore = shutil.ignore_patterns("__pycache__", "*.pyc", "*.egg-info", ".*")
    shutil.copytree(src / "pycore", dest / "pycore", ignore=ignore, copy_function=shutil.copyfile)
    for path in [dest, *dest.rglob("*")]:
        path.chmod(0o755 if path.is_dir() else 0o644)


def project_name_version(src: Path = TOP) -> tuple[str, str]:
    project = tomllib.loads((src / "pyproject.toml").read_text())["project"]
    return project["name"], project["version"]


def build_core_wheel(out_dir: Path, src: Path = TOP) -> Path:
    """Build the core's wheel into out_dir with the pinned backend; return its path."""
    backend = _backend()
    out_dir.mkdir(parents=True, exist_ok=True)
    env = {**os.environ, "SOURCE_DATE_EPOCH": str(pins.SOURCE_DATE_EPOCH),
           "PYTHONPATH": str(backend), "PYTHONHASHSEED": "0",
           "PYTHONDONTWRITEBYTECODE": "1"}
    with tempfile.TemporaryDirectory() as tmp:
        work = Path(tmp) / "src"
        _clean_source_copy(src, work)
        built = Path(tmp) / "out"
        done = subprocess.run(
            [sys.executable, "-c",
             "import sys, setuptools.build_meta as b; b.build_wheel(sys.argv[1])",
             str(built)],
            cwd=work, env=env, stdout=subprocess.PIPE, stderr=subprocess.STDOUT, text=True,
        )
        if done.returncode != 0:
            raise SystemExit(f"building the core's wheel failed:\n{done.stdout}")
        wheels = list(built.glob("*.whl"))
        if len(wheels) != 1:
            raise SystemExit(f"the core's build made {len(wheels)} wheels, expected one")
        name, version = project_name_version(src)
        expected = pins.wheel_file_name(name, version)
        if wheels[0].name != expected:
            raise SystemExit(f"the core's wheel is {wheels[0].name}, expected {expected}")
        target = out_dir / expected
        shutil.copyfile(wheels[0], target)
    return target
