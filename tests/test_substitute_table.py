"""The substitute check's placement table (``bomcheck.substitute.table``): finding the original's
placements, its bank and stack mates, and the audit's own stages run on them."""

import pandas as pd
import pytest
from substitute_boards import board  # noqa: F401 (a fixture)
from substitute_boards import SAMPLE_BOM, SAMPLE_DESIGN, alt, check, sample_result

from bomcheck.errors import InputError


def test_original_found_by_mpn_designators_and_text(board):
    found = check(board,
                  alt("TP-0805-105K-50-X7R", "CAP CER 1UF 50V 10% X7R 0805"),
                  alt("C2", "CAP CER 1UF 50V 10% X7R 0805"),
                  alt("cap cer 1uf 50v 10%  x7r 0805", "CAP CER 1UF 50V 10% X7R 0805"))
    assert [(r.match, r.refdes) for r in found] == [("mpn", ("C1", "C2")), ("refdes", ("C2",)),
                                                   ("text", ("C1", "C2"))]


def test_an_original_not_in_the_bom_is_an_input_error(board):
    with pytest.raises(InputError, match="matches no capacitor placement"):
        check(board, alt("NOPE-123", "CAP CER 1UF 50V X7R 0805"))
    with pytest.raises(InputError, match="designators not in the BOM: C9"):
        check(board, alt("C1, C9", "CAP CER 1UF 50V X7R 0805"))


def test_the_original_is_evaluated_exactly_as_the_audit_does():
    # The substitute check runs the audit's stages; on the sample board the original's verdicts
    # are the audit's (less the BOM-line findings, which are the same for both parts).
    from bomcheck.parse import design
    from bomcheck.parse import importer
    from bomcheck.evaluate import rules
    from bomcheck.pipeline.audit import placement_table, run_audit
    from bomcheck.substitute.table import Stages, evaluate

    report = run_audit(str(SAMPLE_BOM), str(SAMPLE_DESIGN))
    d = design.read_design(str(SAMPLE_DESIGN))
    stages = Stages.for_ruleset(rules.load_rules([rules.DEFAULT_RULESET]).for_environment(
        rules.DEFAULT_ENVIRONMENT), groups=d.groups)
    table, verdicts = evaluate(placement_table(importer.read_bom(str(SAMPLE_BOM)).placements, d),
                               stages)
    cols = ["pidx", "rule_id", "status", "value", "limit", "margin", "message"]
    # Passing verdicts' messages are rendered on demand (Report.with_messages).
    audit = report.with_messages(
        report.verdicts[~report.verdicts["rule_id"].str.startswith("bom.")])
    pd.testing.assert_frame_equal(audit[cols].reset_index(drop=True),
                                  verdicts[cols].reset_index(drop=True))


def test_bank_members_are_compared_too():
    # The sample's +24V_BULK bank (C11-C13, C38): swapping C11, C12 can change the whole bank.
    (r,) = [r for r in sample_result().results
            if r.alternate.original == "VPX-1210-106K-35-X7R"]
    assert {p.refdes: p.role for p in r.placements} == {"C11": "replaced", "C12": "replaced",
                                                        "C13": "group", "C38": "group"}
