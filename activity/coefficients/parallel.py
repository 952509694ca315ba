"""Activity coefficients of grids larger than memory: dask arrays and xarray objects.

:func:`activity_coefficients` takes a mapping of species to molality arrays — numpy
arrays, dask arrays or xarray ``DataArray`` objects — and returns one array per species
of the same kind:

* numpy in, numpy out (one call of the model, as :class:`~activity.solution.Solution`);
* dask in, dask out, lazily: the model runs block by block (``map_blocks``) when the
  result is computed, on whatever scheduler is active — threads, processes, or a
  ``dask.distributed`` cluster of many machines — so a grid of 10⁸ compositions never has
  to fit in memory and can be reduced or written chunk by chunk;
* xarray in, xarray out: inputs are aligned and broadcast by their dimension names and
  the results keep those dimensions and coordinates (a dask-backed ``DataArray`` stays lazy).

With ``stacked=True`` the result is one array whose leading axis runs over the species
instead of a dict of arrays. On dask this is what to reduce: a reduction over the rows
(``.mean(axis=1)``) is then fused into the task that evaluates the block, one task per block,
whereas a reduction of each species of the dict is one more task per species and block, all
reading the same stacked block (measured on a 2-worker LocalCluster with 8 species: 18 tasks
per block instead of 2, 2 to 4 times the CPU in the workers' event loops and in the
scheduler; the workers' CPU in all for the same rows 1.05 to 1.5 times that of one process
against 0.9 to 1.3 times for the stacked graph, in runs on a loaded 2-core machine).

Temperature and pressure may be scalars or arrays of the same kinds. dask and xarray are
optional (``pip install 'activity[dask]'``) and imported only when such an input arrives.

Each block is evaluated with ``warn=False``: rows outside a model's validity are not
warned about block by block; ask for ``in_range=True`` to get the per-row flag as one
more array (key ``"in_range"``), and reduce it like any other.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from ..constants import P_ATM, T_REF
from ..errors import InputError
from ..species import parse_species
from . import resolve_model
from .base import ModelLike

__all__ = ["activity_coefficients"]

_OUTPUTS = ("gamma", "log10_gamma")


def _kind(x: Any) -> str:
    """'xarray', 'dask' or 'numpy', without importing dask or xarray."""
    mod = type(x).__module__
    if mod.startswith("xarray"):
        return "xarray"
    if mod.startswith("dask"):
        return "dask"
    return "numpy"


#: Models resolved from a name in this process (a worker evaluates many blocks: a model
#: such as Pitzer then reads its parameter set and binds its species once, not per block).
#: A memo keyed by the class and parameters of the freshly resolved model.
_MODELS: dict[tuple, Any] = {}


def _model(model: ModelLike) -> Any:
    fresh = resolve_model(model)
    if not isinstance(model, str):
        return fresh
    key = (type(fresh), repr(sorted(fresh.params.items(), key=lambda kv: kv[0])))
    if key not in _MODELS:
        if len(_MODELS) >= 32:
            _MODELS.clear()
        _MODELS[key] = fresh
    return _MODELS[key]


def _evaluate_block(
    model: Any, species: tuple, output: str, in_range: bool, fixed: tuple, *blocks: np.ndarray
) -> np.ndarray:
    """One block: molality blocks (one per species), then the T and P blocks → stacked results.

    ``fixed`` is (T, P) with a number where that input is a scalar (then it comes as no
    block: a scalar temperature stays one temperature, so a model takes its one-T path,
    e.g. Pitzer's coefficients evaluated once instead of per row) and None where it comes
    as a block. Runs in the worker; the model (an object or a registered name) is resolved
    there. Returns shape ``(n_species [+ 1],) + block shape``; the extra row is the in-range
    flag.
    """
    from ..solution import Solution

    ms, rest = blocks[: len(species)], list(blocks[len(species) :])
    T, P = (v if v is not None else rest.pop(0) for v in fixed)
    sol = Solution(dict(zip(species, ms)), T=T, P=P, neutrality="ignore")
    res = _model(model).activity_coefficients(sol, warn=False)
    lg = np.asarray(res.log10_gamma)
    out = 10.0**lg if output == "gamma" else lg
    if in_range:
        flag = np.broadcast_to(np.asarray(res.in_range, dtype=float), sol.shape)[None]
        out = np.concatenate([out, flag])
    return out


def _fixed(values: list) -> tuple[tuple, list]:
    """Split the trailing T and P: a scalar (not an array of any kind) is kept as a float."""
    fixed, arrays = [], list(values[:-2])
    for v in values[-2:]:
        if _kind(v) == "numpy" and np.ndim(v) == 0:
            fixed.append(float(np.asarray(v, dtype=float)))
        else:
            fixed.append(None)
            arrays.append(v)
    return tuple(fixed), arrays


def _split(stacked: Any, species: tuple, in_range: bool) -> dict[str, Any]:
    out = {s: stacked[i] for i, s in enumerate(species)}
    if in_range:
        out["in_range"] = stacked[len(species)] > 0.5
    return out


def _numpy(model, species, output, in_range, values):
    fixed, arrays = _fixed(values)
    blocks = [np.asarray(a, dtype=float) for a in arrays]
    return _evaluate_block(model, species, output, in_range, fixed, *blocks)


def _dask(model, species, output, in_range, values):
    import dask.array as da

    fixed, arrays = _fixed(values)
    arrays = da.broadcast_arrays(*[da.asarray(v) for v in arrays])
    ref = max(arrays, key=lambda a: a.npartitions)  # the most finely chunked input sets the blocks
    arrays = [a.rechunk(ref.chunks) for a in arrays]
    n_out = len(species) + (1 if in_range else 0)
    return da.map_blocks(
        _evaluate_block,
        model,
        species,
        output,
        in_range,
        fixed,
        *arrays,
        new_axis=0,
        chunks=((n_out,),) + ref.chunks,
        dtype=float,
        meta=np.empty((0,) * (ref.ndim + 1)),
    )


def _xarray(model, species, output, in_range, values, stacked):
    import xarray as xr

    for v in values:
        if _kind(v) != "xarray" and np.ndim(v) > 0:
            raise InputError(
                "with xarray inputs give the other arrays as DataArray too (or scalars), so that "
                "their dimensions are named",
                field="composition",
                value=type(v).__name__,
            )
    fixed, arrays = _fixed(values)
    das = xr.broadcast(*[v if _kind(v) == "xarray" else xr.DataArray(v) for v in arrays])
    template = das[0]
    if stacked and "species" in template.dims:
        raise InputError(
            "the inputs have a dimension 'species' already; with stacked=True the result adds one",
            field="stacked",
            value=stacked,
        )
    data = [d.transpose(*template.dims).data for d in das]
    rest = data[len(species) :]
    data = data[: len(species)] + [v if v is not None else rest.pop(0) for v in fixed]  # scalar T, P stay
    inner = _dask if any(_kind(x) == "dask" for x in data) else _numpy
    raw = inner(model, species, output, in_range, data)
    if stacked:
        coords = dict(template.coords)
        coords["species"] = list(species) + (["in_range"] if in_range else [])
        return xr.DataArray(raw, dims=("species",) + template.dims, coords=coords, name=output)
    out = {}
    for key, arr in _split(raw, species, in_range).items():
        label = key if key == "in_range" else f"{output}({key})"
        out[key] = xr.DataArray(arr, dims=template.dims, coords=template.coords, name=label)
    return out


def activity_coefficients(
    composition: Mapping[str, Any],
    model: ModelLike = "davies",
    *,
    T: ArrayLike = T_REF,
    P: ArrayLike = P_ATM,
    output: str = "gamma",
    in_range: bool = False,
    stacked: bool = False,
) -> Any:
    """Activity coefficients for numpy, dask or xarray molality arrays, keeping their kind.

    Parameters
    ----------
    composition : Mapping[str, array_like]
        Species → molality (mol/kg): numpy arrays or scalars, dask arrays, or xarray
        DataArrays (dask-backed or not). All broadcast together with ``T`` and ``P``.
    model : str or ActivityModel, default 'davies'
        Sent to the workers as it is: a name is resolved in each worker (Pitzer then reads
        its parameter set once per worker process and block binding is cached there).
    T, P : array_like
        Temperature (K) and pressure (Pa), scalars or arrays of the same kinds.
    output : {'gamma', 'log10_gamma'}
    in_range : bool, default False
        Add the key ``'in_range'``: whether each row lies inside the model's validity.
    stacked : bool, default False
        Return one array of shape ``(n_species [+ 1],) + shape`` instead of a dict: the
        species in the order of ``composition``, then (when ``in_range``) the flag as 1.0
        inside the validity and 0.0 outside. xarray: a DataArray with the leading dimension
        ``species`` whose coordinate holds the canonical names (and ``'in_range'``). Reduce
        this one on dask (see the module notes): one task per block.

    Returns
    -------
    dict or array
        Species (canonical names) → array of the input's kind (lazy for dask), plus
        ``'in_range'`` when asked; with ``stacked=True`` one array of the input's kind.

    Examples
    --------
    >>> import numpy as np
    >>> g = activity_coefficients({"Na+": np.array([0.01, 0.1]), "Cl-": np.array([0.01, 0.1])})
    >>> np.round(g["Na+"], 4)
    array([0.9019, 0.7812])
    >>> np.round(activity_coefficients({"Na+": 0.1, "Cl-": 0.1}, stacked=True), 4)
    array([0.7812, 0.7812])
    """
    if output not in _OUTPUTS:
        raise InputError(f"must be one of {_OUTPUTS}", field="output", value=output)
    if not isinstance(stacked, (bool, np.bool_)):
        raise InputError("must be True or False", field="stacked", value=stacked)
    if not isinstance(composition, Mapping) or not composition:
        raise InputError("expected a non-empty mapping of species to molalities", field="composition", value=None)
    species = []
    for raw in composition:
        name = parse_species(raw).name
        if name in species:
            raise InputError(f"species given twice (as {name!r})", field="composition", value=raw)
        species.append(name)
    species_t = tuple(species)
    resolve_model(model)  # a bad name fails here, not inside a worker
    values = list(composition.values()) + [T, P]
    kinds = {_kind(v) for v in values}
    if "xarray" in kinds:
        return _xarray(model, species_t, output, in_range, values, stacked)
    inner = _dask if "dask" in kinds else _numpy
    raw = inner(model, species_t, output, in_range, values)
    return raw if stacked else _split(raw, species_t, in_range)
