"""Hunchbook: a catalogue, research journal and quick-run engine for futures trading ideas.

``hunchbook.load_rules``, ``hunchbook.load_data`` and ``hunchbook.run`` are the notebook API
(see :mod:`hunchbook.api`); they are imported on first use so that ``import hunchbook.core``
stays light.
"""

import os
from typing import Any

# Sweeps run in parallel over processes; linear-algebra threads inside each of them would only
# fight over the same cores (a 100-market sweep ran 2.5x slower with them on 2 cores). Set
# before numpy loads, unless the user chose otherwise.
for _name in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_name, "1")

__version__ = "0.1.0"

__all__ = ["__version__", "load_data", "load_rules", "run"]


def __getattr__(name: str) -> Any:
    if name in ("load_data", "load_rules", "run"):
        from hunchbook import api

        return getattr(api, name)
    raise AttributeError(f"module 'hunchbook' has no attribute {name!r}")
