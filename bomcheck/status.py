"""The one definition of verdict statuses: their order, ranks and the worst of several.

Every stage and renderer that compares statuses imports them from here. Worst last: "nodata"
ranks above "warn" (an unchecked stress may be anything, a warning is known), "waived" (an
approved deviation, see ``bomcheck.evaluate.waivers``) just above "pass" (known and signed).
"""

from __future__ import annotations

from collections.abc import Iterable

STATUS_ORDER: tuple[str, ...] = ("pass", "waived", "warn", "nodata", "fail")
RANK: dict[str, int] = {s: i for i, s in enumerate(STATUS_ORDER)}

# Verdict statuses a rule can give (``waived`` comes only from a waiver).
RULE_STATUSES: tuple[str, ...] = ("pass", "warn", "fail", "nodata")

# What a verdict rests on, in increasing doubt. ``firm``: every input was given; ``bound``: an
# unknown was taken at the bound that can only make the verdict kinder (a failure there is a
# failure whatever the unknown), or at the worst plausible bound (a pass there is a pass);
# ``generic``: the verdict changes within the plausible range of an unknown, so it is at most a
# warning that names the datum to give; ``missing``: an input is missing, no verdict (nodata).
BASES: tuple[str, ...] = ("firm", "bound", "generic", "missing")


def rank(status: str) -> int:
    """The rank of ``status`` in ``STATUS_ORDER`` (unknown texts rank as pass)."""
    return RANK.get(status, 0)


def worst(statuses: Iterable[str]) -> str:
    """The worst of some statuses; "pass" for none."""
    best = 0
    for s in statuses:
        r = RANK.get(s, 0)
        if r > best:
            best = r
    return STATUS_ORDER[best]


def at_least(status: str, level: str) -> bool:
    """True when ``status`` is at or above ``level``."""
    return RANK.get(status, 0) >= RANK[level]
