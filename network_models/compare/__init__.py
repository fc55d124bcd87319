"""Compare compounds on one basis: the same model fitted to every compound — all its curves together and
every specimen alone — with one headline per compound and verdicts against a baseline from the specimens.

    >>> from network_models.compare import compare
    >>> cmp = compare(compounds, model="extended-tube", baseline="A", service_temperature=353.15,
    ...               exclude={"B": {"B-4": "torn at the grip"}})
    >>> cmp["B"].headline          # strand density ν with its basis and interval (specimen scatter with fit error)
    >>> cmp["B"].stats["G0"]       # n, mean, sd, median, ci95 over the specimens
    >>> cmp["B"].specimens         # every specimen: its own fit's numbers, outlier flags, exclusion reason
    >>> cmp.differences()          # per quantity: % and absolute difference, Welch 95 % interval, verdict
    >>> cmp.to_dict()              # the JSON document (contract in README, "Comparing compounds")

Layout: :mod:`.records` (result records), :mod:`.pooled` (one fit to all of a compound's curves),
:mod:`.specimens` (grouping, specimen fits, headline basis rule), :mod:`.core` (comparison, verdicts, JSON);
the statistics are in :mod:`network_models.statistics`.
"""

from ..constants import TRADE_MODULI
from .core import VERDICT_QUANTITIES, Comparison, analyse_compound, compare, model_spread, result_to_dict
from .pooled import (
    analyse,
    at_temperature,
    entanglement_modulus_table,
    flory_rehner_strand_density,
    measured_at,
    specimen_values,
    split_modulus,
    strand_density_from_modulus,
)
from .records import BASIS, DEFAULT_TEST_TEMPERATURE, TEMPERATURE_NOTE, CompoundResult, Headline, ParamRow, Quantity
from .specimens import BASIS_TIERS, SPECIMEN_QUANTITIES, SpecimenResult, specimen_groups

__all__ = [
    "BASIS", "BASIS_TIERS", "DEFAULT_TEST_TEMPERATURE", "SPECIMEN_QUANTITIES", "TEMPERATURE_NOTE", "TRADE_MODULI",
    "VERDICT_QUANTITIES", "Comparison", "CompoundResult", "Headline", "ParamRow", "Quantity", "SpecimenResult",
    "analyse", "analyse_compound", "at_temperature", "compare", "entanglement_modulus_table",
    "flory_rehner_strand_density", "measured_at", "model_spread", "result_to_dict", "specimen_groups",
    "specimen_values", "split_modulus", "strand_density_from_modulus",
]
