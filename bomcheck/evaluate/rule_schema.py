"""Rule files against their JSON schema: every error, with its JSON path and what was expected.

``RuleSchema`` wraps the schema (``bomcheck/schemas/rules.schema.json``, read by the loader) and
turns each jsonschema error into readable problems, in the spirit of ``best_match``, through a
table of message builders by validator keyword. The path and value helpers here are shared with
the cross-field checks of ``bomcheck.evaluate.rule_build``. No I/O.
"""

from __future__ import annotations

import difflib
import functools
import json
from collections.abc import Callable, Sequence
from typing import Any

from bomcheck.errors import RuleProblem

Problems = list[tuple[tuple, RuleProblem]]  # (sort key, problem) of one file
Messages = list[tuple[list[Any], str]]  # (JSON path parts, message)


def path_key(parts: Sequence[Any]) -> tuple:
    """Sort key of a JSON path: list positions in order, then keys by name."""
    return tuple((0, p, "") if isinstance(p, int) else (1, 0, str(p)) for p in parts)


def json_path(parts: Sequence[Any]) -> str:
    """``("rule", 3, "fail")`` -> ``rule[3].fail``."""
    out = ""
    for p in parts:
        out += f"[{p}]" if isinstance(p, int) else (f".{p}" if out else str(p))
    return out or "(top level)"


def where(doc: Any, parts: Sequence[Any]) -> str:
    """The JSON path of ``parts``, with the rule's id where the path is inside a rule."""
    text = json_path(parts)
    if len(parts) >= 2 and parts[0] == "rule" and isinstance(parts[1], int):
        rules = doc.get("rule") if isinstance(doc, dict) else None
        if isinstance(rules, list) and parts[1] < len(rules) and isinstance(rules[parts[1]], dict):
            rid = rules[parts[1]].get("id")
            if isinstance(rid, str):
                text += f" (rule {rid})"
    return text


def show(value: Any) -> str:
    """A value as a message quotes it, cut to 60 characters."""
    text = json.dumps(value, default=str) if not isinstance(value, str) else repr(value)
    return text if len(text) <= 60 else text[:57] + "..."


def suggest(word: str, choices: Any) -> str:
    """`` (did you mean 'x'?)`` for the closest of ``choices``, else an empty string."""
    close = difflib.get_close_matches(word, list(choices), n=1)
    return f" (did you mean {close[0]!r}?)" if close else ""


class RuleSchema:
    """The rule-file schema and the readable problems of a document against it."""

    def __init__(self, root: dict) -> None:
        self.root = root

    @functools.cached_property
    def validator(self) -> Any:
        """The JSON Schema validator (jsonschema is imported only when a user file is checked)."""
        import jsonschema

        return jsonschema.Draft202012Validator(self.root)

    def problems(self, doc: dict, display: str, out: Problems) -> None:
        """Append every schema problem of ``doc`` (the file ``display``) to ``out``."""
        for e in self.validator.iter_errors(doc):
            for parts, message in self.messages(e, list(e.absolute_path)):
                out.append((path_key(parts), RuleProblem(display, where(doc, parts), message)))

    def messages(self, e: Any, parts: list[Any]) -> Messages:
        """Readable messages for one jsonschema error."""
        return _MESSAGES.get(e.validator, _as_given)(self, e, parts)

    def expected(self, schema: Any) -> str:
        """What a (sub)schema asks for, in words: its description, enum or type."""
        if not isinstance(schema, dict):
            return "a valid value"
        if "$ref" in schema:
            name = schema["$ref"].rsplit("/", 1)[-1]
            return self.expected(self.root["$defs"].get(name, {}))
        if "description" in schema:
            return schema["description"]
        if "enum" in schema:
            return "one of " + ", ".join(json.dumps(v) for v in schema["enum"])
        if "type" in schema:
            return f"a {schema['type']}"
        return "a valid value"


def _unknown_keys(s: RuleSchema, e: Any, parts: list[Any]) -> Messages:
    allowed = list(e.schema.get("properties", {}))
    extras = [k for k in e.instance if k not in allowed]
    return [(parts + [k], f"unknown key {k!r}{suggest(k, allowed)}; expected one of: "
             + ", ".join(allowed)) for k in extras]


def _missing_key(s: RuleSchema, e: Any, parts: list[Any]) -> Messages:
    # One error per missing key; its message starts with the key's repr.
    named = [k for k in e.validator_value if k not in e.instance and e.message.startswith(repr(k))]
    if not named:
        return [(parts, e.message)]
    expected = s.expected(e.schema.get("properties", {}).get(named[0]))
    return [(parts + [named[0]], f"missing required key; expected {expected}")]


def _branches(s: RuleSchema, e: Any, parts: list[Any]) -> Messages:
    from jsonschema.exceptions import best_match

    branch = _matching_branch(e)
    if branch:  # the value has the type of one branch: report what is wrong inside it
        out: Messages = []
        for sub in branch:
            out.extend(s.messages(sub, parts + list(sub.relative_path)))
        return out
    if "description" in e.schema:
        return [(parts, f"found {show(e.instance)}; expected {e.schema['description']}")]
    inner = best_match(e.context)
    if inner is None:
        return [(parts, e.message)]
    return [(parts + list(inner.relative_path), inner.message)]


def _matching_branch(e: Any) -> list[Any]:
    """The errors of the one oneOf/anyOf branch whose type the value has, if exactly one has."""
    branches: dict[Any, list[Any]] = {}
    for sub in e.context:
        branches.setdefault(sub.schema_path[0], []).append(sub)
    typed = [errs for errs in branches.values()
             if not any(s.validator == "type" and not s.relative_path for s in errs)]
    return typed[0] if len(typed) == 1 else []


def _enum(s: RuleSchema, e: Any, parts: list[Any]) -> Messages:
    return [(parts, f"found {show(e.instance)}; expected one of "
             + ", ".join(json.dumps(x) for x in e.validator_value))]


def _found_expected(s: RuleSchema, e: Any, parts: list[Any]) -> Messages:
    return [(parts, f"found {show(e.instance)}; expected {s.expected(e.schema)}")]


def _as_given(s: RuleSchema, e: Any, parts: list[Any]) -> Messages:
    return [(parts, e.message)]


# Message builder by jsonschema validator keyword; any other keyword keeps jsonschema's message.
_MESSAGES: dict[str, Callable[[RuleSchema, Any, list[Any]], Messages]] = {
    "additionalProperties": _unknown_keys,
    "required": _missing_key,
    "oneOf": _branches,
    "anyOf": _branches,
    "enum": _enum,
    **dict.fromkeys(("type", "pattern", "minLength", "minItems", "maxItems", "uniqueItems",
                     "minimum", "exclusiveMinimum", "propertyNames"), _found_expected),
}


__all__ = ["RuleSchema", "json_path", "path_key", "show", "suggest", "where"]
