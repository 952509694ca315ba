"""Pitzer ion-interaction model: parameters as data, batch evaluation with numpy.

Modules: ``_params`` (file layout, validation, temperature functions), ``_binding``
(species-set binding), ``_kernel`` (the equations), ``_unsym`` (J, Eθ), ``_model``
(the :class:`PitzerModel` class), ``_compiled`` (the equations compiled with numba, an
optional extra; imported only when a model uses it).
"""

from ._model import PitzerModel
from ._params import ParameterSet, load_parameters
from ._unsym import e_theta, j_pitzer1975

__all__ = ["PitzerModel", "ParameterSet", "load_parameters", "e_theta", "j_pitzer1975"]
