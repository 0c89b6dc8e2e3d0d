"""docs/rules.md against the check registry it is generated from."""

import ast
import re
from pathlib import Path

from registry import rules_doc
from registry.engine.findings import CheckName
from registry.engine.rulebook import COMMON_PRACTICE, RULES, rule_for

ROOT = Path(__file__).resolve().parents[1]

# What a source must name when it is not marked as a rule of thumb: a standard, a published
# table or guidance, a datasheet or maker's rating, or the circuit law used.
PUBLISHED = re.compile(r"IEC \d|HSE GS38|LBNL|datasheet|maker's|circuit theory|scipy")


def test_docs_rules_md_is_the_generated_text():
    path = ROOT / "docs" / "rules.md"
    assert path.read_text(encoding="utf-8") == rules_doc.render(), \
        "docs/rules.md drifted from registry/engine/rulebook.py: run python -m registry.rules_doc"


def test_check_mode_reports_drift(tmp_path):
    target = tmp_path / "rules.md"
    assert rules_doc.main([str(target), "--check"]) == 1  # absent
    assert rules_doc.main([str(target)]) == 0
    assert rules_doc.main([str(target), "--check"]) == 0
    target.write_text(target.read_text(encoding="utf-8") + "edited\n", encoding="utf-8")
    assert rules_doc.main([str(target), "--check"]) == 1


def test_every_check_1_to_12_once_and_every_finding_name_has_its_rule():
    numbers = [r.number for r in RULES if r.number]
    assert numbers == list(range(1, 13))
    for name in CheckName:
        assert name in rule_for(name).names


def test_every_listed_test_exists():
    for rule in RULES:
        assert rule.tests, rule.heading
        for test in rule.tests:
            path, _, name = test.partition("::")
            tree = ast.parse((ROOT / path).read_text(encoding="utf-8"))
            names = {n.name for n in ast.walk(tree) if isinstance(n, ast.FunctionDef)}
            assert name in names, test


def test_every_source_is_published_or_marked_a_rule_of_thumb():
    for rule in RULES:
        assert rule.sources, rule.heading
        for source in rule.sources:
            assert PUBLISHED.search(source) or "no source" in source, (rule.heading, source)
    assert "common practice (no source)" == COMMON_PRACTICE


def test_no_reference_to_a_document_outside_the_repository():
    text = rules_doc.render()
    assert "§" not in text
    for rule in RULES:
        assert f"## {rule.heading}" in text and f"(#{rule.anchor})" in text
