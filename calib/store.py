"""Resumable results store: every solved point kept on disk, so a rerun or an interrupted sweep resumes.

Layout: one file ``<key>.npz`` per solved point in a folder (by default ``OUT/.airbias-store/``),
written atomically (the archive is built in memory and written through :mod:`calib.atomic`, so a
killed run leaves either the complete file or none). Each file holds

* the solution state the sweep needs later: cell fields ``u``, ``v`` (m/s), ``p`` (Pa), ``mu_eff``
  (Pa s) and the face ``mass_flux`` (kg/s per radian), the start of the next flow of a chain and the
  finest level's VTU files and figures;
* the rotor-plane profile ``profile_r`` (m), ``profile_u``, ``profile_v`` (m/s);
* the residual and monitor history (``history:<name>``);
* a JSON ``meta`` record with the scalar fields of :class:`calib.table.PointResult`.

The key is the SHA-256 of everything that decides the point's floating-point value
(:func:`point_key`): the case's source text (and its parsed form), the flow (exact ``repr``), the mesh
level, the closure-constant overrides, the solver settings, the airbias version plus a fingerprint of
the source code that computes a point, and the key of the point the solve started from (a converged
steady solve still depends on its start within the residual tolerance, so the same inputs with a
different start are a different point). Loading uses ``allow_pickle=False``: nothing in the folder
is ever executed. Files of older code versions are simply never matched; delete the folder to
reclaim the space.
"""
from __future__ import annotations

import functools
import hashlib
import importlib.metadata
import io
import json
import re
import zipfile
from dataclasses import dataclass, replace
from pathlib import Path

import numpy as np

from geometry.case import Case
from solver.flow import FlowState, SolverSettings

from .atomic import write_bytes
from .profile import RotorPlaneProfile
from .table import PointResult

STORE_FOLDER = ".airbias-store"
STORE_FORMAT = 1  # bump when the file layout changes
STATE_FIELDS = ("u", "v", "p", "mu_eff", "mass_flux")
_KEY = re.compile(r"[0-9a-f]{64}")
# Code whose change can change a solved point's numbers: the solver, the geometry and the reading.
_FINGERPRINTED = ("solver", "geometry", "calib/pipeline.py", "calib/rotor_plane.py", "calib/profile.py")


@functools.lru_cache(maxsize=1)
def code_version() -> str:
    """airbias's package version plus a SHA-256 of the source files that compute a point."""
    try:
        version = importlib.metadata.version("airbias")
    except importlib.metadata.PackageNotFoundError:
        version = "unknown"
    root = Path(__file__).resolve().parents[1]
    digest = hashlib.sha256()
    for part in _FINGERPRINTED:
        path = root / part
        files = sorted(path.rglob("*.py")) if path.is_dir() else [path]
        for file in files:
            digest.update(str(file.relative_to(root)).encode())
            digest.update(file.read_bytes())
    return f"{version}+{digest.hexdigest()[:16]}"


def point_key(case: Case, level: str, flow: float, start_key: str | None, overrides: dict,
              settings: SolverSettings) -> str:
    """SHA-256 (hex) naming one solved point; see the module docstring for what goes in."""
    parsed = replace(case, source_text="", base_dir=Path("."))
    payload = {
        "format": STORE_FORMAT, "version": code_version(), "case_text": case.source_text,
        "case": repr(parsed), "level": level, "flow": repr(float(flow)), "start": start_key,
        "overrides": sorted((name, repr(float(value))) for name, value in overrides.items()),
        "settings": repr(settings),
    }
    return hashlib.sha256(json.dumps(payload, sort_keys=True).encode()).hexdigest()


@dataclass
class StoredPoint:
    """A solved point with what the sweep needs of its solution."""

    point: PointResult
    state: FlowState
    history: dict[str, np.ndarray]


class PointStore:
    """A folder of solved points, one ``<key>.npz`` each; the folder is made on the first ``put``."""

    def __init__(self, folder):
        self.folder = Path(folder)

    def path(self, key: str) -> Path:
        return self.folder / f"{key}.npz"

    def __contains__(self, key: str) -> bool:
        return self.path(key).is_file()

    def keys(self) -> list[str]:
        """Keys of the complete files (a killed write leaves only a hidden temporary, never listed)."""
        if not self.folder.is_dir():
            return []
        return sorted(p.stem for p in self.folder.glob("*.npz") if _KEY.fullmatch(p.stem))

    def put(self, key: str, stored: StoredPoint) -> Path:
        """Write one point atomically (complete file or none)."""
        p = stored.point
        meta = {"flow": p.flow, "level": p.level, "cells": p.cells, "iterations": p.iterations,
                "converged": p.converged, "wall_s": p.wall_s, "pressure_drop_Pa": p.pressure_drop_Pa,
                "r_inner": p.profile.r_inner, "history": sorted(stored.history)}
        arrays = {name: getattr(stored.state, name) for name in STATE_FIELDS}
        arrays.update(profile_r=p.profile.r, profile_u=p.profile.u, profile_v=p.profile.v)
        arrays.update({f"history:{name}": np.asarray(values) for name, values in stored.history.items()})
        buffer = io.BytesIO()
        np.savez(buffer, meta=np.array(json.dumps(meta)), **arrays)
        self.folder.mkdir(parents=True, exist_ok=True)
        return write_bytes(self.path(key), buffer.getvalue())

    def get(self, key: str) -> StoredPoint | None:
        """The stored point, or None when absent or unreadable (then it is simply solved again)."""
        path = self.path(key)
        if not path.is_file():
            return None
        try:
            with np.load(path, allow_pickle=False) as data:
                meta = json.loads(str(data["meta"]))
                state = FlowState(*(data[name].copy() for name in ("u", "v", "p", "mass_flux", "mu_eff")))
                profile = RotorPlaneProfile(data["profile_r"], data["profile_u"], data["profile_v"],
                                            r_inner=meta["r_inner"])
                history = {name: data[f"history:{name}"].copy() for name in meta["history"]}
        except (OSError, ValueError, KeyError, zipfile.BadZipFile):
            return None
        point = PointResult(flow=meta["flow"], level=meta["level"], cells=meta["cells"],
                            iterations=meta["iterations"], converged=meta["converged"], wall_s=meta["wall_s"],
                            pressure_drop_Pa=meta["pressure_drop_Pa"], profile=profile)
        return StoredPoint(point, state, history)
