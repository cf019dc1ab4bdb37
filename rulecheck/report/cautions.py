"""Safety cautions for the reports: the general ones, and hazards chosen from a result's outcomes.

The selection is table-driven so that every renderer (HTML, Markdown, e-mail
text) says the same thing. A hazard is raised only by a *safety-relevant* rule
that failed, was waived (the condition is still there, accepted by someone) or
could not be checked, and whose id or topic matches one of the hazard's
triggers. A rule that passed never raises a hazard: a report that lists every
hazard a design merely touches teaches its readers to skip the list. Texts
follow docs/references.md, safety cautions.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field
from typing import Any

from rulecheck.report.common import plain

__all__ = ["GENERAL", "HAZARDS", "Caution", "Hazard", "Raised", "SelectedHazard", "merge_hazards", "raised_by",
           "select_hazards"]


@dataclass(frozen=True)
class Caution:
    """A caution that every report carries."""

    key: str
    title: str
    text: str


@dataclass(frozen=True)
class Hazard:
    """A specific hazard, with the rule-id and topic fragments that select it."""

    key: str
    title: str
    text: str
    rule_prefixes: tuple[str, ...] = ()
    rule_words: tuple[str, ...] = ()
    topic_words: tuple[str, ...] = ()
    # rules whose applicability says the hazard's kind of load is there: where the spec's result has any of them
    # and none applies (all not applicable), the hazard's wording does not fit this drive train and is not raised
    only_where_applies: tuple[str, ...] = ()


@dataclass
class SelectedHazard:
    """A hazard this result touches, with the drive trains and rules that selected it."""

    hazard: Hazard
    tags: list[str] = field(default_factory=list)
    rules: list[str] = field(default_factory=list)

    @property
    def reason(self) -> str:
        """Return, in words, why the hazard was selected (which drive trains, which rules)."""
        parts = []
        if self.tags:
            noun = "drive trains " if len(self.tags) > 1 else "drive train "
            parts.append(noun + ", ".join(self.tags))
        if self.rules:
            parts.append("rules " + ", ".join(self.rules))
        return "; ".join(parts)


GENERAL: tuple[Caution, ...] = (
    Caution(
        "screening",
        "A screening aid, not an approval",
        "These findings support engineering review. They are not an approval, a certification or a design sign-off. "
        "A pass means only that the rules shown found nothing with the data given; rules that were not checked "
        "prove nothing.",
    ),
    Caution(
        "codes",
        "Local codes govern",
        "Local codes and the authority having jurisdiction govern. NEC Article 430, IEC 60364 and IEC 60204-1 are "
        "named in this tool as examples only; national wiring rules, machinery rules and local amendments take "
        "precedence. Confirm the adopted code edition.",
    ),
    Caution(
        "review",
        "Licensed review for safety-relevant designs",
        "Safety-relevant designs need review by a qualified engineer, and a licensed engineer where the "
        "jurisdiction requires one. Defaults marked 'from memory' or 'common practice' are heuristics: "
        "manufacturer data override them, and they must not be the only basis for a pass on a safety-relevant rule.",
    ),
    Caution(
        "shock",
        "Electric shock and arc flash",
        "Drive trains carry lethal voltages. Do a shock and arc-flash risk assessment (NFPA 70E / IEEE 1584 or the "
        "local equivalent), use lockout/tagout and suitable PPE, and test for absence of voltage before touching.",
    ),
)

HAZARDS: tuple[Hazard, ...] = (
    Hazard(
        "suspended-load",
        "Suspended and overhauling loads",
        "Never rely on the drive, its safe-torque-off function or a self-locking gear to hold a suspended load. "
        "Use a spring-applied brake that sets on loss of power, with proven release and set sequencing and periodic "
        "brake tests; secure the load mechanically for maintenance. Nobody works under a suspended load.",
        rule_prefixes=("holding-brake",),
        rule_words=("hoist", "vertical", "holding", "overhaul", "suspended", "lift"),
        topic_words=("hoist", "holding", "vertical", "lifting"),
        # hoists and declared vertical loads (their applies_when); a belt, fan or pump is never a suspended load
        only_where_applies=("holding-brake-vertical", "hoist-overspeed-protection"),
    ),
    Hazard(
        "runback",
        "Runback and run-on of inclined conveyors",
        "A loaded inclined belt runs back, and a declining one runs on, when its drive stops or trips unless a "
        "backstop or a spring-applied brake holds it. Stop and secure the belt and its load mechanically before "
        "maintenance; never rely on the drive to hold it.",
        rule_words=("runback", "run-on"),
    ),
    Hazard(
        "pm-generation",
        "Permanent-magnet motors generate when turned",
        "A permanent-magnet motor generates voltage whenever its shaft turns: pump back-flow, fan windmilling, a "
        "load being lowered, or turning the shaft by hand. Its terminals can be lethal with the drive isolated. "
        "Lock or uncouple the shaft before working on the motor or its cable.",
        rule_prefixes=("pm-",),
        rule_words=("back-emf", "permanent-magnet"),
        topic_words=("permanent-magnet",),
    ),
    Hazard(
        "stored-energy",
        "Stored energy",
        "DC-link capacitors stay charged after isolation: observe the drive's labelled discharge time and verify "
        "with a meter. Braking resistors can be very hot. Springs, counterweights and flywheels store energy too.",
        rule_words=("regen", "braking", "brake-resistor", "dc-bus", "dc-link", "chopper", "uncontrolled-generation"),
        topic_words=("regeneration", "braking", "dc-bus"),
    ),
    Hazard(
        "overspeed",
        "Overspeed",
        "Field weakening, uncontrolled generation of PM motors, runaway overhauling loads and mechanical burst "
        "speeds need overspeed protection that does not depend on the drive's control loop where the hazard "
        "warrants it.",
        rule_words=("overspeed", "max-speed", "maximum-speed", "field-weakening", "uncontrolled-generation", "runaway"),
        topic_words=("overspeed",),
    ),
    Hazard(
        "restart",
        "Unexpected restart",
        "Automatic restart after a power dip, or flying restart, can start machinery unexpectedly. Prevent restart "
        "where a hazard exists (IEC 60204-1).",
        rule_words=("restart", "auto-start"),
    ),
    Hazard(
        "hazardous-area",
        "Hazardous locations",
        "Explosive atmospheres are outside this tool's scope. Only certified equipment and a qualified "
        "hazardous-area review are acceptable.",
        rule_words=("hazardous-area", "explosive", "atex"),
        topic_words=("hazardous",),
    ),
    Hazard(
        "insulation",
        "Latent insulation and bearing damage",
        "Reflected-wave overvoltage and bearing currents damage motors slowly. Measure the peak voltage at the "
        "motor terminals and the shaft voltage at commissioning.",
        rule_words=("reflected-wave", "insulation", "bearing-current"),
    ),
    Hazard(
        "earthing",
        "Earthing and leakage current",
        "Drive leakage currents can exceed 3.5 mA, which calls for a reinforced protective earth; residual-current "
        "devices must be of a type compatible with drives, and high-frequency bonding must be done properly.",
        rule_words=("earth", "leakage", "rcd", "bonding"),
    ),
)


def _matches(hazard: Hazard, outcome: Mapping[str, Any]) -> bool:
    rule = plain(outcome.get("rule"), 200).lower()
    topic = plain(outcome.get("topic"), 200).lower()
    if any(rule.startswith(p) for p in hazard.rule_prefixes):
        return True
    if any(w in rule for w in hazard.rule_words):
        return True
    return any(w in topic for w in hazard.topic_words)


RAISING_OUTCOMES = ("fail", "waived", "not-checked")


def _raises(outcome: Mapping[str, Any]) -> bool:
    """Return whether an outcome may raise a hazard: a safety-relevant rule that failed, was waived or could not
    be checked. A pass never does."""
    return outcome.get("safety") is True and outcome.get("outcome") in RAISING_OUTCOMES


def _fits(hazard: Hazard, every: list[Mapping[str, Any]]) -> bool:
    """Return whether the hazard's kind of load is in the drive train: none of its ``only_where_applies`` rules
    is in the result, or one of them applies (any outcome but not applicable)."""
    gates = [o for o in every if o.get("rule") in hazard.only_where_applies]
    return not gates or any(o.get("outcome") != "not-applicable" for o in gates)


# what one drive train contributes to the hazard list: (hazard key, drive train's tag, the rules that raise it)
Raised = tuple[str, str, tuple[str, ...]]


def raised_by(spec: Mapping[str, Any]) -> list[Raised]:
    """Return the hazards one spec's failing, waived or unchecked safety rules raise, in table order (a streamed
    report keeps these few lines per spec and merges them with :func:`merge_hazards`)."""
    if not isinstance(spec, Mapping):
        return []
    tag = plain(spec.get("tag"), 80) or plain(spec.get("file"), 120) or "(unnamed)"
    every = [o for o in (spec.get("outcomes") or []) if isinstance(o, Mapping)]
    outcomes = [o for o in every if _raises(o)]
    if not outcomes:
        return []
    raised = []
    for hazard in HAZARDS:
        if not _fits(hazard, every):
            continue
        rules = tuple(plain(o.get("rule"), 120) for o in outcomes if _matches(hazard, o))
        if rules:
            raised.append((hazard.key, tag, rules))
    return raised


def merge_hazards(raised: Iterable[Raised]) -> list[SelectedHazard]:
    """Return the hazards of many specs' :func:`raised_by` lines (given in report order), in table order."""
    by_key = {h.key: h for h in HAZARDS}
    selected: dict[str, SelectedHazard] = {}
    for key, tag, rules in raised:
        entry = selected.setdefault(key, SelectedHazard(by_key[key]))
        if tag not in entry.tags:
            entry.tags.append(tag)
        for r in rules:
            if r not in entry.rules:
                entry.rules.append(r)
    return [selected[h.key] for h in HAZARDS if h.key in selected]


def select_hazards(specs: list[Mapping[str, Any]]) -> list[SelectedHazard]:
    """Return the hazards raised by the given specs' failing, waived or unchecked safety rules, in table order."""
    return merge_hazards(line for spec in specs for line in raised_by(spec))
