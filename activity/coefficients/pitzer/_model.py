"""The Pitzer ion-interaction model as an :class:`~activity.coefficients.base.ActivityModel`."""

from __future__ import annotations

import functools
import os
import sys
import warnings
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from ..._checks import scalar_or_array
from ...constants import LN10, ZERO_CELSIUS
from ...errors import CoverageWarning, InputError
from ...water import debye_huckel_Aphi
from ..base import ActivityModel, Validity
from ._binding import bind
from ._kernel import evaluate
from ._params import ParameterSet, combine

__all__ = ["PitzerModel"]

#: Rows evaluated per block: bounds temporary memory, keeps blocks in cache. Measured on the
#: 8-ion seawater set (CPU time of interleaved runs, 10⁶ rows, a loaded 2-core machine): one T
#: 16384 rows 1.18x faster than 8192, T per row the same; 32768 and more about 2x slower (the
#: blocks leave the cache). 16000 keeps a row of one quantity (125 KiB)
#: under glibc's default 128 KiB mmap threshold, so temporaries come from the heap.
CHUNK = 16000

#: Kernels: "numpy" (always there), "compiled" (numba, the extra ``fast``), "auto".
KERNELS = ("auto", "numpy", "compiled")
#: Environment variable read when ``kernel="auto"``: "numpy" forces the numpy kernel
#: (e.g. to compare, or where numba misbehaves), "compiled" forces the compiled one.
KERNEL_ENV = "ACTIVITY_PITZER_KERNEL"
#: "auto" loads the compiled kernel (numba's import, then the compiled code from numba's
#: on-disk cache: 1.7 s measured on a loaded 2-core machine; the first compilation after an
#: install, 20 s, once) only for a batch of at least this many rows, so that small calls and
#: the command line (tables go in chunks of 10⁵ rows) never pay it ...
COMPILED_MIN_ROWS = 200_000
#: ... and, once it is loaded in the process, uses it for batches of at least this many.
COMPILED_MIN_ROWS_LOADED = 5_000


def _compiled_loaded() -> bool:
    return f"{__package__}._compiled" in sys.modules


@functools.lru_cache(maxsize=1)
def _compiled_kernel():
    """The compiled kernel's module (importing numba), or the ImportError that stopped it."""
    try:
        from . import _compiled
    except ImportError as exc:
        return exc
    return _compiled


class PitzerModel(ActivityModel):
    """Pitzer ion-interaction model (Pitzer 1991, ch. 3; Harvie, Møller & Weare 1984).

    Binary β(0), β(1), β(2), Cφ; like-charge mixing θ with unsymmetrical terms Eθ, Eθ′
    (Pitzer 1975); triple terms ψ; neutral-species λ and ζ. Aφ comes from
    :func:`activity.water.debye_huckel_Aphi` at the solution's T and P. Parameters are
    data (``models/pitzer.toml``); each may depend on temperature.

    Parameters
    ----------
    extra : str, path, Mapping or sequence of them, optional
        Further parameter files (or parsed mappings in the same layout) laid over the
        base set; an entry replaces the base entry for the same interaction.
    base : str, path, Mapping or None, default "pitzer"
        The base parameter set (a shipped name, a file, a mapping), or None for none.
    parameters : optional
        Same as ``extra`` (for ``get_model("pitzer", parameters="my.toml")``).
    kernel : {"auto", "numpy", "compiled"}, default "auto"
        Which implementation evaluates the equations. "numpy" is the pure-numpy kernel;
        "compiled" a numba kernel (install the extra ``activity[fast]``): a whole call on
        10⁶ rows ran 1.6–2.6× faster than with numpy (``benchmarks/bench_speed.py``);
        "auto" uses it when numba is installed and the batch has at least
        :data:`COMPILED_MIN_ROWS` rows (its first use in a process loads the compiled code
        from numba's cache, 1.7–3.2 s measured on a loaded machine; the very first, with an
        empty cache, compiles it, 13–20 s), or :data:`COMPILED_MIN_ROWS_LOADED` once it is
        loaded, else numpy. With "auto" the environment variable ``ACTIVITY_PITZER_KERNEL`` (one of the three
        values) overrides the choice. Both kernels give the same results to rounding
        (about 1e-15 relative).

    Notes
    -----
    Cation–anion pairs without parameters are listed in the result's ``missing`` and
    warned about once per species set (:class:`~activity.errors.CoverageWarning`); their
    terms are absent (only the Debye–Hückel term acts). Rows beyond a pair's fitted
    molality (compared as the ionic strength of the binary solution at that molality)
    or temperature range are flagged in ``in_range``, noted, and warned about
    (:class:`~activity.errors.ValidityWarning`).

    Examples
    --------
    >>> from activity import Solution
    >>> model = PitzerModel()
    >>> sol = Solution({"Na+": 1.0, "Cl-": 1.0})
    >>> g = model.activity_coefficients(sol)
    >>> round(float(np.sqrt(g["Na+"] * g["Cl-"])), 3)   # Robinson & Stokes 1959: 0.657
    0.656
    >>> round(model.osmotic_coefficient(sol), 3)          # Robinson & Stokes 1959: 0.936
    0.936
    """

    name = "pitzer"
    validity = Validity(
        6.0,
        ZERO_CELSIUS,
        ZERO_CELSIUS + 50.0,
        species="ions and neutrals with parameters in the set (missing pairs are listed)",
        basis="shipped parameter set; per-interaction limits are checked as well",
    )

    def __init__(self, extra: Any = None, *, base: Any = "pitzer", parameters: Any = None, kernel: str = "auto"):
        super().__init__()
        self.params = {"extra": extra, "base": base, "parameters": parameters, "kernel": kernel}
        self._table: ParameterSet | None = None

    # ------------------------------------------------------------ parameters
    @staticmethod
    def _as_list(x: ArrayLike) -> list:
        if x is None:
            return []
        if isinstance(x, (list, tuple)):
            return list(x)
        return [x]

    @property
    def table(self) -> ParameterSet:
        """The parameter set in use (base overlaid with the extras), loaded on first use."""
        if self._table is None:
            p = self.params
            self._table = combine(self._as_list(p["base"]) + self._as_list(p["extra"]) + self._as_list(p["parameters"]))
        return self._table

    # ------------------------------------------------------------ contract
    def prepare(self, species, charges):
        b = bind(self.table, species, charges)
        if b.missing:
            warnings.warn(b.notes[0], CoverageWarning, stacklevel=4)
        return b

    def binding_notes(self, bound):
        return bound.notes, bound.missing

    def _compiled_for(self, N: int):
        """The compiled kernel's module if a batch of ``N`` rows goes to it (see ``kernel``), else None."""
        choice, field = self.params.get("kernel", "auto"), "kernel"
        if choice == "auto" and os.environ.get(KERNEL_ENV):
            choice, field = os.environ[KERNEL_ENV].strip().lower(), KERNEL_ENV
        if choice not in KERNELS:
            raise InputError(f"unknown Pitzer kernel; choose one of {', '.join(KERNELS)}", field=field, value=choice)
        if choice == "numpy":
            return None
        if choice == "auto" and N < (COMPILED_MIN_ROWS_LOADED if _compiled_loaded() else COMPILED_MIN_ROWS):
            return None
        mod = _compiled_kernel()
        if isinstance(mod, ImportError):
            if choice == "auto":  # numba absent or broken: the numpy kernel
                return None
            msg = f"the compiled Pitzer kernel needs numba (pip install 'activity[fast]'): {mod}"
            raise InputError(msg, field=field, value=choice)
        return mod

    def _run(self, sol, bound, want: set) -> dict:
        """Evaluate ``want`` ⊆ {"lng", "phi", "gex"} block by block; "lng" comes back as lg γ."""
        n, N = len(sol.species), sol.size
        m = sol.m.reshape(n, N)
        I = np.asarray(sol.ionic_strength, dtype=float).reshape(N)
        T, P = sol.T_compact, sol.P_compact
        scalar_T = T.size == 1
        Aphi_all = np.asarray(debye_huckel_Aphi(T, P))
        if Aphi_all.size > 1:
            Aphi_all = np.broadcast_to(Aphi_all, sol.shape).reshape(N)
        else:
            Aphi_all = float(Aphi_all.reshape(()))
        if scalar_T:
            params = bound.at(T.reshape(()))
        else:
            T_all = np.broadcast_to(T, sol.shape).reshape(N)
        compiled = self._compiled_for(N)  # imports numba only if it is used
        if compiled is not None:
            res = compiled.run(bound, m, I, T.reshape(()) if scalar_T else T_all, Aphi_all, want)
            return {k: (v.reshape((n,) + sol.shape) if k == "lng" else v.reshape(sol.shape)) for k, v in res.items()}
        res = {k: np.empty((n, N) if k == "lng" else (N,)) for k in want}
        for s in range(0, N, CHUNK):
            sl = slice(s, min(N, s + CHUNK))
            Pc = params if scalar_T else bound.at(T_all[sl])
            Ac = Aphi_all if np.ndim(Aphi_all) == 0 else Aphi_all[sl]
            part = evaluate(bound, Pc, not scalar_T, m[:, sl], I[sl], Ac, want)
            for k, v in part.items():
                if k == "lng":  # lg γ = ln γ / ln 10, formed while the block is in cache
                    np.divide(v, LN10, out=res[k][:, sl])
                else:
                    res[k][..., sl] = v
        return {k: (v.reshape((n,) + sol.shape) if k == "lng" else v.reshape(sol.shape)) for k, v in res.items()}

    def compute(self, sol, bound, I):
        # γ and φ share their sums: one pass gives both for little more than γ alone.
        # (``_run`` returns lg γ under "lng".)
        out = self._run(sol, bound, {"lng", "phi"})
        return out["lng"], out["phi"]

    def compute_log10_gamma(self, sol, bound, I):
        return self._run(sol, bound, {"lng"})["lng"]

    def compute_osmotic(self, sol, bound, I):
        return self._run(sol, bound, {"phi"})["phi"]

    # ------------------------------------------------------------ public
    def excess_gibbs(self, sol) -> Any:
        """Excess Gibbs energy per kilogram of water over RT, Gex/(w RT), in mol/kg.

        ``ln γ_i`` is its derivative with respect to ``m_i``; the tests check this.

        Examples
        --------
        >>> from activity import Solution
        >>> round(PitzerModel().excess_gibbs(Solution({"K+": 0.1, "Cl-": 0.1})), 5)
        -0.03819
        """
        bound = self.bind(sol.species, sol.charges)
        return scalar_or_array(self._run(sol, bound, {"gex"})["gex"])

    def check_range(self, sol, I):
        # The model-wide checks of the base class, plus each interaction's fitted molality
        # and temperature range: noted, warned (by the base, word for word as noted) and
        # reflected in ``in_range``.
        ok, notes = super().check_range(sol, I)
        bound = self.bind(sol.species, sol.charges)
        pok, pnotes = self._pair_checks(sol, bound)
        mok, mnotes = self._missing_checks(sol, bound)
        return ok & pok & mok, notes + pnotes + mnotes

    def _missing_checks(self, sol, bound) -> tuple[np.ndarray, tuple]:
        """Rows in which both ions of a cation–anion pair without parameters are present: their
        terms are absent (NaI at 1 mol/kg comes out 32 % low), so those rows are out of range."""
        n, N = len(sol.species), sol.size
        m = sol.m.reshape(n, N)
        ok = np.ones(N, dtype=bool)
        notes = []
        for entry in bound.missing:
            names = entry.split(" ")
            if len(names) != 2 or names[0] not in sol.species or names[1] not in sol.species:
                continue  # neutral species without λ: recorded in missing, not a pair
            both = (m[sol.species.index(names[0])] > 0) & (m[sol.species.index(names[1])] > 0)
            if np.any(both):
                ok &= ~both
                notes.append(
                    f"pitzer: no parameters for the pair {entry}, present together in {int(np.count_nonzero(both))} "
                    f"of {N} row(s): outside the model's validity"
                )
        return ok.reshape(sol.shape), tuple(notes)

    def _pair_checks(self, sol, bound) -> tuple[np.ndarray, tuple]:
        """Rows beyond an interaction's fitted ionic strength or temperature range (one check
        at a time, memory O(rows): see ``Bound.pair_checks``)."""
        if not bound.checks:
            return np.ones(sol.shape, dtype=bool), ()
        n, N = len(sol.species), sol.size
        I = np.asarray(sol.ionic_strength, dtype=float).reshape(N)
        T = np.asarray(sol.T_compact, dtype=float)
        T = T.reshape(()) if T.size == 1 else np.broadcast_to(T, sol.shape).reshape(N)
        ok, notes = bound.pair_checks(sol.m.reshape(n, N), I, T)
        return ok.reshape(sol.shape), notes
