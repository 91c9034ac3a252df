"""Rule sets as data: load the TOML derating rules the evaluate stage applies and merge them.

A rule set is a TOML file (schema: ``bomcheck/schemas/rules.schema.json``) with a ``[ruleset]``
table, ``[[rule]]`` entries and optional typical data (``[dc_bias]``, ``[aging]``,
``[typical_ratings]``, ``[circuit]``) for the stress stage. Shipped sets live in the package
``bomcheck.rulesets``; users pass their own files by path, each read through
``bomcheck.read.reader``, and ``extends`` chains are followed. A user file is checked against the
schema (``rule_schema``) and across its fields (``rule_build``), which builds the values of
``rule_model``; every limit is converted once, at load, to the SI quantity of the metric it
limits. Every problem in every file is collected and raised together as one ``RuleError``.
"""

from __future__ import annotations

import functools
import json
from collections.abc import Sequence
from dataclasses import dataclass, field, replace
from importlib import resources
from pathlib import Path
from typing import Any

from bomcheck.errors import InputError, RuleError, RuleProblem
from bomcheck.evaluate.rule_build import FileHead, RuleFile, build_file
from bomcheck.evaluate.rule_model import (
    DEFAULT_ENVIRONMENT, ENVIRONMENTS, Aging, DcBias, Layer, Rule, RuleSet, Source, TypicalRatings,
)
from bomcheck.evaluate.rule_schema import Problems, RuleSchema, json_path, suggest
from bomcheck.read.reader import load_toml, read_bytes, toml_text

DEFAULT_RULESET = "industrial"
MAX_EXTENDS_DEPTH = 32  # files in one extends chain (the shipped sets use 2 or 3)
"""The rule set used when no ``--rules`` is given: ``industrial``.

Most BOMs hold commercial and industrial parts, and the industrial set is written for them: its
voltage limits come from the System Reliability Center derating sheet (benign column as the fail
limit, severe column as the warn limit) and its temperature-dependent limits from makers'
published practice. The ``strict`` set takes its limits from NASA EEE-INST-002 Section C1 Table 4, written
for qualified military-style parts in flight hardware; as a default it would fail most commercial
designs on the first run and bury the findings that matter. High-reliability work asks for it with
``--rules strict``.
"""

SHIPPED_PACKAGE = "bomcheck.rulesets"


def shipped_root():
    """The folder of the shipped rule sets: the installed package ``bomcheck.rulesets`` (the
    top-level ``rules/`` folder, mapped at install), or ``rules/`` itself when the code runs from
    a source checkout whose own ``bomcheck/`` shadows the installed copy."""
    try:
        return resources.files(SHIPPED_PACKAGE)
    except ModuleNotFoundError:
        checkout = Path(__file__).resolve().parents[2] / "rules"
        if checkout.is_dir():
            return checkout
        raise


def shipped_names() -> list[str]:
    """Names of the rule sets shipped in the package, sorted."""
    root = shipped_root()
    return sorted(p.name[: -len(".toml")] for p in root.iterdir() if p.name.endswith(".toml"))


def load_rules(specs: Sequence[str] | str = ()) -> RuleSet:
    """Load rule sets by shipped name or file path and merge them in order.

    Each file's ``extends`` is loaded first; a later rule with the same id replaces the earlier
    one; ``enable``/``disable`` switch rules known at that point. With no spec the default set is
    loaded. Raises ``RuleError`` listing every problem in every file.
    """
    if isinstance(specs, str):
        specs = [specs]
    specs = list(specs) or [DEFAULT_RULESET]
    state = _State()
    for spec in specs:
        _apply(spec, None, state, ())
    if state.problems:
        raise RuleError(state.problems)
    names = [s.name for s in state.top]
    top = state.top[-1]
    merged = len(state.top) > 1
    return RuleSet(
        name="+".join(names),
        title=" + ".join(s.title for s in state.top) if merged else top.title,
        version=", ".join(f"{s.name} {s.version}" for s in state.top) if merged else top.version,
        description="" if merged else top.description,
        rules=tuple(state.rules.values()),
        sources=tuple(state.sources.values()),
        layers=tuple(state.layers),
        dc_bias=state.dc_bias,
        aging=state.aging,
        typical=state.typical,
        circuit=state.circuit,
    )


@dataclass
class _State:
    rules: dict[str, Rule] = field(default_factory=dict)
    sources: dict[str, Source] = field(default_factory=dict)
    layers: list[Layer] = field(default_factory=list)
    top: list[FileHead] = field(default_factory=list)
    dc_bias: DcBias | None = None
    aging: Aging | None = None
    typical: TypicalRatings | None = None
    circuit: dict[str, Any] | None = None
    problems: list[RuleProblem] = field(default_factory=list)


def _locate(spec: str, base: Path | None) -> tuple[str, str, Path | None]:
    """(identity key, display name, file path or None for a shipped set) of a spec.

    Raises ``RuleError`` for a name that is neither shipped nor a file.
    """
    looks_like_path = spec.endswith(".toml") or "/" in spec or "\\" in spec
    if not looks_like_path and spec in shipped_names():
        return f"shipped:{spec}", f"{spec}.toml (shipped)", None
    path = Path(spec)
    if base is not None and not path.is_absolute():
        path = base / path
    if path.is_file():
        return f"file:{path.resolve()}", str(path), path
    names = ", ".join(shipped_names())
    raise RuleError([RuleProblem(
        spec, "rule set",
        f"no shipped rule set or file of that name; expected one of {names} or a path to a "
        ".toml file",
    )])


def _apply(spec: str, base: Path | None, state: _State, stack: tuple[str, ...],
           from_display: str | None = None) -> None:
    """Load ``spec`` (its base first) and merge it into ``state``, collecting problems."""
    try:
        key, display, path = _locate(spec, base)
    except RuleError as exc:
        if from_display is not None:  # an `extends` naming nothing
            exc.problems[0] = RuleProblem(from_display, "ruleset.extends", exc.problems[0].message
                                          + f"; found {spec!r}")
        state.problems.extend(exc.problems)
        return
    if key in stack:
        state.problems.append(RuleProblem(from_display or display, "ruleset.extends",
                                          f"extends chain loops back to {display}"))
        return
    if len(stack) >= MAX_EXTENDS_DEPTH:
        state.problems.append(RuleProblem(
            from_display or display, "ruleset.extends",
            f"extends chain longer than {MAX_EXTENDS_DEPTH} files; expected a short chain of "
            "rule sets, each extending a shipped set or another file"))
        return
    try:
        if path is not None:  # a regular file within the size limit, like every input
            text = toml_text(read_bytes(str(path), "rule file"), display)
        else:
            text = shipped_root().joinpath(f"{spec}.toml").read_text("utf-8")
        doc = load_toml(text, display)
    except InputError as exc:
        state.problems.append(RuleProblem(display, "TOML" if "TOML" in exc.problem or "nested"
                                          in exc.problem else "file", exc.problem))
        return
    except (OSError, UnicodeDecodeError) as exc:
        state.problems.append(RuleProblem(display, "file", f"cannot read: {exc}"))
        return
    problems: Problems = []
    if path is not None:  # shipped sets are schema-checked by the test suite, not on every run
        _schema().problems(doc, display, problems)
    built = build_file(doc, display, problems)
    head = doc.get("ruleset")
    extends = head.get("extends") if isinstance(head, dict) else None
    before = len(state.problems)
    if isinstance(extends, str):
        _apply(extends, path.parent if path is not None else None, state, stack + (key,), display)
    problems.sort(key=lambda p: p[0])
    state.problems.extend(dict.fromkeys(p for _, p in problems))  # sorted, each once
    if problems or built is None:
        return
    _merge(built, state, stack, check_ids=len(state.problems) == before)


def _merge(f: RuleFile, state: _State, stack: tuple[str, ...], check_ids: bool) -> None:
    """Merge a checked file into ``state``; ``check_ids`` False when its base failed to load."""
    for rule in f.rules:
        state.rules[rule.id] = rule
    for verb, ids in (("enable", f.enable), ("disable", f.disable)):
        for i, rid in enumerate(ids):
            if rid not in state.rules:
                if not check_ids:
                    continue
                state.problems.append(RuleProblem(
                    f.display, f"ruleset.{verb}[{i}]",
                    f"no rule {rid!r} to {verb}{suggest(rid, state.rules)}; expected the id of a "
                    "rule in this file, its base or an earlier --rules set",
                ))
            else:
                state.rules[rid] = replace(state.rules[rid], enabled=(verb == "enable"))
    for s in f.sources:
        state.sources.setdefault(s.id, s)
    state.dc_bias = f.dc_bias or state.dc_bias
    state.aging = f.aging or state.aging
    state.typical = f.typical or state.typical
    if f.circuit:  # key by key, so that a set extending another may change one option
        state.circuit = {**(state.circuit or {}), **f.circuit}
    state.layers.append(Layer(f.head.name, f.head.title, f.head.version, f.display, f.extends))
    if not stack:
        state.top.append(f.head)


@functools.lru_cache(maxsize=1)
def _schema() -> RuleSchema:
    """The rule-file schema (package data), read once."""
    text = resources.files("bomcheck.schemas").joinpath("rules.schema.json").read_text("utf-8")
    return RuleSchema(json.loads(text))


__all__ = [
    "DEFAULT_ENVIRONMENT", "DEFAULT_RULESET", "ENVIRONMENTS", "RuleSet", "json_path", "load_rules",
    "shipped_names", "shipped_root",
]
