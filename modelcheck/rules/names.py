"""The names a rule expression can use for a member, and where each value comes from.

The names and what each is are rows of ``modelcheck.common.vocabulary``; the mappings here are
read from it. Numbers are in SI base units in the member table; expressions see them as pint
quantities.
Text names are for conditions (``shape == "I"``, ``matches(name, "*rod*")``).
"""

from __future__ import annotations

from collections.abc import Mapping
from types import MappingProxyType

from modelcheck.common import vocabulary
from modelcheck.common.vocabulary import Quantity

#: the quantities a rule can use, by name, in the order a check's missing inputs are listed
MEMBER_QUANTITIES: Mapping[str, Quantity] = MappingProxyType(
    {str(q.name): q for q in vocabulary.rule_quantities()})

#: text names for conditions: name -> description
TEXT_NAMES: Mapping[str, str] = MappingProxyType({t.name: t.about for t in vocabulary.texts()})

#: names only a check's message can use
MESSAGE_NAMES: Mapping[str, str] = MappingProxyType({
    "demand": "the check's demand", "capacity": "the check's capacity", "ratio": "demand / capacity",
})

RESERVED: frozenset[str] = frozenset(MEMBER_QUANTITIES) | frozenset(TEXT_NAMES) | frozenset(MESSAGE_NAMES)
