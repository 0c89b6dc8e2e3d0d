"""The registry of checks: per check its number, its finding names, its rule in words, its
sources and the tests that cover it.

``docs/rules.md`` is generated from :data:`RULES` (``python -m registry.rules_doc``) and the web
app's "Rules and sources" page shows the same; ``tests/test_rules_doc.py`` fails when the file
drifts from the registry, when a listed test does not exist, or when a finding name has no
rule. The sources are the code's own constants, so what the doc cites is what the findings say.
"""

from __future__ import annotations

from dataclasses import dataclass

from ..standards import hazardous_live, impulse, probe_tips, stored_energy
from . import checks, dead_work, discharge, history, setups
from .findings import CheckName
from .network import limits

COMMON_PRACTICE = "common practice (no source)"


@dataclass(frozen=True)
class Rule:
    """One check: ``number`` (1 to 12; 0 for a rule beside the numbered checks), the finding
    names it gives (``names``), a ``title``, the ``rule`` in words, its ``sources`` (a
    standard with its clause or table, a published method, or marked "common practice (no
    source)") and ``tests`` ("path::test_function")."""

    number: int
    title: str
    names: tuple[CheckName, ...]
    rule: str
    sources: tuple[str, ...]
    tests: tuple[str, ...]

    @property
    def heading(self) -> str:
        return f"Check {self.number}: {self.title}" if self.number else self.title

    @property
    def anchor(self) -> str:
        """The heading's anchor in docs/rules.md, as GitHub and most renderers form it."""
        text = "".join(ch for ch in self.heading.lower() if ch.isalnum() or ch in " -")
        return text.replace(" ", "-")


def _levels(lv: hazardous_live.LiveLevels) -> str:
    return f"{lv.source}: {lv.rms:g} V rms, {lv.peak:g} V peak, {lv.dc:g} V dc"


_CHECKS = "tests/engine/test_checks.py::"
_DISCHARGE = "tests/engine/test_discharge.py::"
_PAIRS = "tests/network/test_pairs.py::"

RULES: tuple[Rule, ...] = (
    Rule(1, "setup shape", (CheckName.SETUP,),
         "A setup is an instrument in one mode, with at most one lead-type accessory (test "
         "leads, an hv divider or a current clamp) and at most one tip (probe or clip), their "
         "connectors matching. The mode must do the plan's task on the plan's waveform. A "
         f"voltage mode below {setups.LOW_Z / 1e3:g} kohm may serve to discharge. Combinations "
         "are formed per model, then mapped onto the units of each model.",
         (setups.SOURCE,),
         (_CHECKS + "test_cat_iii_meter_with_cat_iv_leads_fits_a_480_277_board",
          "tests/engine/test_demo_plans.py::test_hv_supply_through_the_divider",
          "tests/engine/test_sites.py::test_accessories_come_from_the_instruments_site")),
    Rule(2, "measurement category and rated voltage", (CheckName.CATEGORY, CheckName.TIP),
         "On a mains circuit every item of the chain needs one rating that is at least the "
         "circuit's measurement category and at least the higher of the working voltage and "
         "the voltage to earth, both at once: a higher category at a lower voltage, or a "
         "higher voltage in a lower category, does not stand in. An isolated circuit, and the "
         "instrument behind a divider, need the voltage only. No rating recorded: unknown. "
         "The item whose metal touches the circuit is held to its exposed tip on CAT III and "
         "CAT IV work and on any hazardous-live circuit: more than "
         f"{probe_tips.MAX_EXPOSURE * 1e3:g} mm fails on CAT III and CAT IV, more than "
         f"{probe_tips.PREFERRED_EXPOSURE * 1e3:g} mm is a caution; elsewhere more than "
         f"{probe_tips.PREFERRED_EXPOSURE * 1e3:g} mm is a caution.",
         (checks.SRC_CATEGORY, probe_tips.SOURCE_CAT),
         (_CHECKS + "test_cat_ii_meter_does_not_fit_a_cat_iii_board",
          _CHECKS + "test_higher_category_at_lower_voltage_does_not_stand_in",
          _CHECKS + "test_leads_of_a_lower_category_decide_the_chain",
          _CHECKS + "test_tip_over_4_mm_fails_on_cat_iii_and_over_2_mm_is_a_caution",
          _CHECKS + "test_tip_is_checked_on_isolated_hazardous_live_work",
          "tests/standards/test_tables.py::test_probe_tips")),
    Rule(3, "transient overvoltage", (CheckName.TRANSIENT,),
         "The transient a mains circuit can deliver is the impulse test voltage of its "
         "category for its voltage to earth, the next row up when between rows; above the "
         "1000 V row no category applies. An isolated circuit states its transient in the "
         "plan, or the check is not run. Each item's impulse withstand comes only from the "
         "ratings that cover the circuit (check 2): the table's value for that category and "
         "voltage, or a stated transient, the higher. An item with ratings of which none "
         "covers fails; one whose covering ratings give no withstand is unknown.",
         (impulse.SOURCE,),
         (_CHECKS + "test_impulse_withstand_comes_from_the_rating_that_covers_the_circuit",
          _CHECKS + "test_a_rating_that_does_not_cover_the_circuit_vouches_for_no_impulse",
          _CHECKS + "test_isolated_transient_not_run_without_plan_value_and_unknown_without_"
                    "withstand",
          "tests/standards/test_tables.py::test_impulse_table",
          "tests/standards/test_tables.py::test_impulse_rounds_up_to_next_row")),
    Rule(4, "altitude", (CheckName.ALTITUDE,),
         "Each rating holds up to its stated altitude, else the item's, else 2000 m. A site "
         "above it fails, and the finding states the clearance factor the site would ask: the "
         "table's next row up for the site against the row at or below the rated altitude, "
         "no interpolation.",
         (checks.SRC_ALTITUDE,),
         (_CHECKS + "test_rating_above_the_sites_altitude_does_not_hold",
          _CHECKS + "test_rating_stated_for_high_altitude_holds",
          _CHECKS + "test_altitude_factor_is_the_next_row_up_and_stated",
          "tests/standards/test_tables.py::test_altitude_table_values",
          "tests/standards/test_tables.py::test_altitude_factor_takes_the_next_row_up")),
    Rule(5, "mode input", (CheckName.MODE_INPUT,),
         "The mode's maximum input must be at least the voltage at its terminals (behind a "
         "divider, the divided voltage; on a discharge task, the peak the capacitance holds). "
         "On a current task the mode's maximum current, or a clamp's current rating, must be "
         "at least the circuit's current, and every lead, tip and clip carrying it in series "
         "must be rated for it: the lowest rating governs. A limit not recorded is unknown.",
         (checks.SRC_MODE, checks.SRC_CHAIN_CURRENT),
         (_CHECKS + "test_current_mode_above_its_maximum_fails",
          _CHECKS + "test_series_current_needs_every_lead_tip_and_clip_rated_the_lowest_"
                    "governs",
          _CHECKS + "test_missing_instrument_value_is_unknown_and_unverified")),
    Rule(6, "reasonably foreseeable misuse", (CheckName.MISUSE,),
         "On a current task the current input is put across the circuit: its fuse (and any "
         "fused accessory's) must break the prospective current and be rated for the working "
         "voltage (its dc rating on dc), else the setup fails. On a voltage task, leads left "
         "in a current socket put that fuse across the circuit: a shortfall is a caution. "
         "Every other mode on the same terminals is held, as if selected by mistake, to its "
         "maximum input (or its fuse), its time limit (check 8) and the stored energy a low-Z "
         "input would take (check 9); a shortfall there is a caution. Without a prospective "
         "current the breaking capacity is not run.",
         (checks.SRC_MISUSE, checks.SRC_MISUSE_ENERGY),
         (_CHECKS + "test_fuse_breaking_less_than_the_prospective_current_fails_a_current_task",
          _CHECKS + "test_adequate_fuse_passes_and_low_voltage_fuse_fails_on_dc",
          _CHECKS + "test_dc_fuse_voltage_is_checked_without_a_prospective_current",
          _CHECKS + "test_leads_left_in_the_current_socket_are_a_caution_naming_the_fuse",
          _CHECKS + "test_other_mode_on_the_same_terminals_is_a_caution",
          _CHECKS + "test_low_z_selected_by_mistake_on_a_charged_bank",
          _CHECKS + "test_other_mode_on_the_same_terminals_is_held_to_its_time_limit")),
    Rule(7, "loading", (CheckName.LOADING,),
         "An input of resistance Zin on a source behind Zs shows V*Zin/(Zin+Zs): more than "
         f"{checks.READING_TOLERANCE:.0%} low is a caution. Without a source impedance (or a "
         "prospective current) the check is not run. A divider loaded by other than its "
         f"required load, more than {checks.LOAD_TOLERANCE:.0%} off, reads wrong by "
         "Zl*(RL+Rout)/(RL*(Zl+Rout)) - 1 (a caution stating it; unknown without its output "
         "resistance). A divider whose recorded attenuation and resistances disagree by more "
         f"than {checks.DIVIDER_DATA_TOLERANCE:.0%}, or fit no two-resistor divider, is a "
         "caution naming the fields.",
         (checks.SRC_LOADING, checks.SRC_DIVIDER, checks.SRC_DIVIDER_DATA),
         (_CHECKS + "test_loading_caution_on_a_soft_source",
          _CHECKS + "test_divider_into_the_wrong_load_is_a_caution_with_its_error",
          _CHECKS + "test_loaded_divider_attenuation_worked_example",
          _CHECKS + "test_divider_data_more_than_10_percent_apart_is_a_caution_naming_the_"
                    "fields",
          "tests/engine/test_physics.py::test_reading_with_source_impedance",
          "tests/engine/test_physics.py::test_divider_load_error_formula")),
    Rule(8, "low-Z input and duration", (CheckName.LOW_Z,),
         f"A voltage input below {setups.LOW_Z / 1e3:g} kohm draws V/R and dissipates V**2/R; "
         "the plan keeps it connected for its duration, which must not exceed the maker's "
         "time limit for the mode (max_duration). A limit not recorded is unknown.",
         (checks.SRC_LOWZ,),
         (_CHECKS + "test_low_z_longer_than_its_limit_fails",
          "tests/engine/test_physics.py::test_low_z_input_on_2kv")),
    Rule(9, "stored energy and discharge", (CheckName.DISCHARGE,),
         "The plan's capacitance drains through the setup's path: through the front end when "
         "the model has one, else by the RC law. The energy the path absorbs (all of it to "
         "the safe level on a discharge task, what leaves in the plan's duration otherwise) "
         "must not exceed the path's energy limit; a low-Z or discharge path without a limit "
         "is unknown. On a discharge task the safe level must be reached within the time the "
         f"path is held on (else a fail); more than {checks.DISCHARGE_TIME_LIMIT:g} s is a "
         "caution; a discharge tool's power rating below the peak power V0**2/R is a caution.",
         (checks.SRC_DISCHARGE, discharge.SRC_FRONT_END, checks.SRC_POWER),
         (_CHECKS + "test_discharge_tool_suitable_and_slow_stick_unsuitable",
          _CHECKS + "test_discharge_beyond_the_tools_energy_fails",
          _CHECKS + "test_low_z_input_draining_a_bank_without_a_limit_is_unknown",
          _DISCHARGE + "test_kx7_check_9_fails_the_hold_with_the_numbers",
          _DISCHARGE + "test_rc_law_against_the_closed_form_and_scipy",
          _DISCHARGE + "test_power_rating_below_the_peak_power_is_a_caution",
          "tests/engine/test_physics.py::test_discharge_time_and_energy_against_integration")),
    Rule(10, "protection path", (CheckName.PROTECTION_PATH, CheckName.INPUT_CONSISTENCY),
         "Where the model describes its front end, the netlist of the setup's mode is solved "
         "in three scenarios: the steady state (PTCs heating until they trip, fuses opening), "
         "the impulse of check 3 through the generator impedance of the category, and the "
         "discharge of check 9. Every stressed element is held to its datasheet limits: "
         "voltage, current, power, pulse energy, a varistor's continuous voltage and surge "
         "energy, a fuse's breaking capacity, an open contact's gap. A limit not given is "
         "unknown; a solve that fails is unknown. Other modes on the same terminals are "
         "solved as foreseeable misuse, their fails becoming cautions. The mode's stated "
         "input resistance and the front end's must agree within 10 %, else a caution.",
         (limits.SRC_DATASHEET, limits.SRC_VARISTOR, limits.SRC_TVS, limits.SRC_RESISTOR_PULSE,
          limits.SRC_GAP, limits.SRC_STEADY_GAP, limits.SRC_FUSE,
          "the stated input resistance and the front end should agree within 10 %: "
          + COMMON_PRACTICE),
         (_PAIRS + "test_switch_ahead_of_the_limiter_fails_under_impulse_behind_it_passes",
          _PAIRS + "test_varistor_continuous_voltage_below_working_voltage_fails_though_label_"
                   "passes",
          _PAIRS + "test_missing_limit_is_unknown_and_setup_unverified",
          _PAIRS + "test_misuse_turns_fails_into_cautions_and_stiff_source_is_said",
          _PAIRS + "test_open_contact_held_against_the_steady_state_clearance_table",
          "tests/network/test_ngspice.py::test_kx7_front_end_against_ngspice",
          "tests/network/test_linear.py::test_consistency_open_path_is_a_caution",
          "tests/standards/test_clearance.py::test_rows_as_published")),
    Rule(11, "a unit's history", (CheckName.HISTORY,),
         "A unit is left out of a job when retired, away, on hold (an open hold or the "
         "status) or overdue for verification, the first of these named. A past event outside "
         "its rating in the setup's mode (for an accessory, any mode) stays a caution after "
         "its hold is released; a stress event whose size was not recorded is a caution; "
         f"{history.WORN_CLAMP_EVENTS} or more transients that made its clamp conduct are a "
         "caution (a worn varistor); no verification date on record is a caution.",
         (history.SRC_HISTORY, history.SRC_VARISTOR),
         ("tests/engine/test_history_rules.py::test_exclusion_order",
          "tests/engine/test_history_rules.py::test_event_outside_rating_in_the_same_mode_is_a_"
          "caution_after_release",
          "tests/engine/test_history_rules.py::test_three_clamped_transients_wear_the_varistor",
          _CHECKS + "test_on_hold_overdue_away_retired_units_are_excluded_with_the_first_"
                    "reason")),
    Rule(12, "cautions", (),
         "Every result carries the cautions: it does not replace the instrument's manual, a "
         "risk assessment, the local rules and codes or a qualified person's judgement; wear "
         "the PPE the local rules require; on verify-absence, prove the tester on a known "
         "live source before and after. Then the plan's hazards plainly: hazardous live or "
         "not (the level for the waveform), the stored energy and its capacitor hazards, "
         "discharging to the safe level, and a circuit above 1000 V to earth being outside "
         "the measurement categories.",
         (_levels(hazardous_live.IEC_61010_031), _levels(hazardous_live.IEC_61010_1_WET),
          stored_energy.SOURCE),
         (_CHECKS + "test_cautions_state_hazards_plainly",
          "tests/standards/test_tables.py::test_hazardous_live_levels",
          "tests/standards/test_tables.py::test_capacitor_hazard_thresholds")),
    Rule(0, "Dead work and proving dead", (CheckName.PROVING_DEAD,),
         "Beside checks 2 to 9: a resistance, continuity or insulation task is made on a "
         "circuit proved dead, its voltage taken as what the circuit could deliver if live "
         "(misuse protection, checks 5 and 6); on verify-absence a purpose-built two-pole "
         "voltage tester ranks ahead of other instruments at equal verdicts, and a multimeter "
         "or clamp meter set up to prove dead carries a caution.",
         (dead_work.SRC_ISOLATE, dead_work.SRC_PROVING),
         ("tests/engine/test_result_rules.py::test_resistance_task_carries_the_isolation_"
          "caution_and_checks_misuse",
          "tests/engine/test_result_rules.py::test_verify_absence_ranks_a_two_pole_tester_"
          "ahead_of_a_multimeter")),
)

VERDICTS = ("A setup is unsuitable if any finding fails; else unverified if any is unknown "
            "(missing data is never read as fine); else conditional if any is a caution; "
            "else suitable. A check the plan gives no data for is not run and says which plan "
            "field it needs. A setup's margin is its deciding finding's, shown as the ratio "
            "available / required (\"x1.33\"), rounded down.")

def rule_for(name: str) -> Rule:
    """The rule that gives findings named ``name`` (a :class:`CheckName` value)."""
    for rule in RULES:
        if name in rule.names:
            return rule
    raise KeyError(name)
