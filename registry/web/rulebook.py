"""Rules and sources: the check registry as a read-only page, the same text as docs/rules.md."""

from __future__ import annotations

from flask import Blueprint, render_template

from ..engine.rulebook import RULES, VERDICTS, rule_for
from ..rules_doc import INTRO
from .access import role_required

bp = Blueprint("rulebook", __name__, url_prefix="/rules")


@bp.route("/")
@role_required("viewer")
def index():
    return render_template("rulebook/index.html", rules=RULES, verdicts=VERDICTS, intro=INTRO)


@bp.app_template_filter("rule_anchor")
def rule_anchor(check: str) -> str:
    """The anchor of a finding's check on this page ("check-2-...") for the result pages'
    links; empty for a name the registry does not hold."""
    try:
        return rule_for(check).anchor
    except KeyError:
        return ""
