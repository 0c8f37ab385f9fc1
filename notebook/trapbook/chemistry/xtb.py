"""GFN2-xTB energies and geometry optimisation through tblite.

For molecules of 10-40 atoms one gradient costs a few milliseconds on one
thread, and OpenMP threading only adds overhead (measured ~6x slower with two
threads here); so tblite is pinned to one thread and the two cores are used by
running conformers in separate processes instead.
"""

from __future__ import annotations

import os

os.environ.setdefault("OMP_NUM_THREADS", "1")

from dataclasses import dataclass  # noqa: E402

import numpy as np  # noqa: E402
from scipy.optimize import minimize  # noqa: E402

from trapbook.errors import ChemistryError  # noqa: E402

HARTREE_KCAL = 627.5095
BOHR_ANGSTROM = 0.529177210903
METHOD = "GFN2-xTB"
# Max |gradient| accepted as converged, hartree/bohr (tight enough for 0.01 kcal/mol energies).
GRAD_TOL = 5e-4
MAX_STEPS = 1500


@dataclass
class Optimised:
    energy_hartree: float
    positions: np.ndarray  # angstrom
    converged: bool
    max_gradient: float
    gradient_calls: int
    bond_orders: np.ndarray | None = None

    @property
    def energy_kcal(self) -> float:
        return self.energy_hartree * HARTREE_KCAL


def tblite_version() -> str:
    try:
        from importlib.metadata import version

        return version("tblite")
    except Exception:  # noqa: BLE001 - a missing dist-info must not break the version string
        return "unknown"


def _calculator(numbers, positions_bohr):
    import importlib.util

    if importlib.util.find_spec("tblite") is None:  # a hard dependency: say so plainly rather than a bare ImportError
        raise ChemistryError("The GFN2-xTB engine (tblite) is not installed.", "Install tblite or use the fast tier.")
    from tblite.interface import Calculator

    calc = Calculator(METHOD, np.asarray(numbers, dtype=int), positions_bohr)
    calc.set("verbosity", 0)
    return calc


def optimise(numbers, positions_angstrom, charge: float = 0.0, max_steps: int = MAX_STEPS) -> Optimised:
    """Relax a geometry on the GFN2-xTB surface with L-BFGS over Cartesians.

    Restarted once from the end point if the first run stops short of the gradient
    threshold, which is how shallow ring-flip surfaces usually end.
    """
    x0 = np.asarray(positions_angstrom, dtype=float) / BOHR_ANGSTROM
    try:
        calc = _calculator(numbers, x0)
        if charge:
            calc.set("charge", charge)  # pragma: no cover - neutral species only so far
        calls = [0]

        def energy_and_gradient(flat):
            calls[0] += 1
            calc.update(flat.reshape(-1, 3))
            res = calc.singlepoint()
            return res.get("energy"), res.get("gradient").ravel()

        x = x0.ravel()
        for _ in range(2):
            out = minimize(
                energy_and_gradient,
                x,
                jac=True,
                method="L-BFGS-B",
                options={"maxiter": max_steps, "gtol": GRAD_TOL / 5, "ftol": 1e-12, "maxcor": 30},
            )
            x = out.x
            if np.abs(out.jac).max() < GRAD_TOL:
                break
        calc.update(x.reshape(-1, 3))
        final = calc.singlepoint()
        grad = np.abs(final.get("gradient")).max()
        return Optimised(
            energy_hartree=float(final.get("energy")),
            positions=x.reshape(-1, 3) * BOHR_ANGSTROM,
            converged=bool(grad < GRAD_TOL),
            max_gradient=float(grad),
            gradient_calls=calls[0] + 1,
            bond_orders=_wiberg_matrix(final.get("bond-orders")),
        )
    except ChemistryError:
        raise
    except Exception as exc:  # noqa: BLE001 - tblite raises its own runtime errors on SCF failure
        raise ChemistryError(
            f"The GFN2-xTB calculation failed ({type(exc).__name__}).",
            "The geometry may be unreasonable; try the fast tier or check the structure.",
        ) from exc


def _wiberg_matrix(raw) -> np.ndarray:
    """tblite returns one (n, n) slab per spin channel; closed shells have one."""
    arr = np.asarray(raw, dtype=float)
    return arr.sum(axis=-1) if arr.ndim == 3 else arr


def optimise_job(job: tuple) -> Optimised | str:
    """Picklable entry point for a worker process: (numbers, positions_angstrom).

    A failure comes back as its message rather than as an exception, so that one
    bad conformer neither kills the pool nor loses the error's wording in pickling.
    """
    numbers, positions = job
    try:
        return optimise(numbers, positions)
    except ChemistryError as exc:
        return exc.message
