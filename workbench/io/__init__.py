"""Readers of the workbench's input formats (see docs/data_formats.md).

Each reader returns ``(data, ledger)``; bad input raises
:class:`workbench.errors.InputError`.
"""
from .inputs import Inputs, load_inputs
from .ledger import Ledger
from .met import read_met
from .samples import read_air, read_precipitation, parse_reference_state
from .sites import Site, SiteCatalogue, read_sites

__all__ = ["Inputs", "Ledger", "Site", "SiteCatalogue", "load_inputs", "parse_reference_state",
           "read_air", "read_met", "read_precipitation", "read_sites"]
