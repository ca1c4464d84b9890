"""`statorsmith size`: from a requirement to ranked, checked designs (layout.sizing)."""

from __future__ import annotations

import functools
import json
import math
import tomllib
from pathlib import Path

import pytest

from fab.fit import check_parts
from layout import sizing as S
from layout.design import compute_design
from layout.forces import disc_outer_radius_mm
from layout.materials import STATOR_BINDERS_MAX_C
from layout.requirement import load_requirement, parse_requirement
from layout.spec import DesignError, parse_spec

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "designs" / "requirements" / "orchard.toml"
DATA = Path(__file__).resolve().parent / "data"

# A small search space of our own: 24 V DC at 4 A from one stock block, a 220 mm disc.
SMALL = """
name = "bench-supply"
purpose = "a small search space for the tests"
objective = "cost"
[target]
kind = "dc"
voltage_v = 24.0
rated_current_a = 4.0
rated_rpm = 500.0
max_rpm = 700.0
rated_power_w = 90.0
[limits]
max_disc_diameter_mm = 220.0
[magnets]
stock = "one_block.csv"
"""


def small():
    return parse_requirement(tomllib.loads(SMALL), "bench-supply.toml", DATA)


@functools.cache
def demo_sizing():
    return S.size(load_requirement(DEMO), top=5, accept=check_parts)


def meets(req, text: str) -> list[str]:
    """Every limit re-checked on the design file by the full model, apart from the search."""
    d = compute_design(parse_spec(tomllib.loads(text), "check.toml"))
    check_parts(d)
    lim = req.limits
    missed = []
    if 2 * disc_outer_radius_mm(d.spec) > lim.max_disc_diameter_mm:
        missed.append("disc")
    limit_c = lim.max_coil_temperature_c or STATOR_BINDERS_MAX_C[lim.binder]
    if d.operating is not None:
        row = min(d.operating.rows, key=lambda r: abs(r.condition - req.rated_condition))
        power = row.load_power_w
        hottest = max(r.point.coil_temperature_c for r in d.operating.rows if r.point is not None)
        eff = row.efficiency
    else:
        power, hottest, eff = (
            d.prediction.rated.dc_power_w,
            d.prediction.rated.coil_temperature_c,
            d.prediction.rated.efficiency,
        )
    if power < req.rated_power_w:
        missed.append("power")
    if hottest > limit_c:
        missed.append("heat")
    if eff < lim.min_efficiency:
        missed.append("efficiency")
    avoidable = [w.code for w in d.warnings if w.severity == "danger" and w.code not in S.INHERENT]
    if not lim.elv_at_runaway:
        avoidable = [c for c in avoidable if c != "voltage.above_elv"]
    return missed + avoidable


def test_the_best_candidate_meets_every_limit_when_rechecked():
    s = demo_sizing()
    best = s.results[0]
    assert not best.fails
    assert meets(s.requirement, best.text) == []


def test_the_ranking_follows_the_objective():
    s = demo_sizing()
    feasible = [r for r in s.results if not r.fails]
    assert feasible
    costs = [r.cost for r in feasible]
    assert costs == sorted(costs)
    # and for another objective, on the figure the table prints
    data = tomllib.loads(SMALL) | {"objective": "efficiency"}
    s2 = S.size(
        parse_requirement(data, "eff.toml", DATA), top=3, accept=check_parts, full_checks=8, relax=False
    )
    effs = [r.efficiency for r in s2.results if not r.fails]
    assert effs == sorted(effs, reverse=True)
    assert all(r.figure == r.efficiency for r in s2.results)
    # those that miss a limit come after every one that meets them all
    ranks = [not r.fails for r in s.results]
    assert ranks == sorted(ranks, reverse=True)


def test_every_reported_figure_is_the_full_models():
    s = demo_sizing()
    for r in s.results:
        row = min(r.design.operating.rows, key=lambda x: abs(x.condition - s.requirement.rated_condition))
        assert r.output_w == row.load_power_w
        assert r.copper_kg == r.design.prediction.copper_mass_kg


def test_a_small_search_equals_the_exhaustive_full_model_search():
    req = small()
    found = S.size(req, top=1, accept=check_parts, full_checks=1000, relax=False)
    # exhaustive: every candidate through the full model and the fit checks, none screened out
    cands = S.candidates(req)
    assert 20 <= len(cands) <= 80
    screened = {id(s.candidate): s for s in S.screen(req)}
    best = None
    for c in cands:
        s = next(v for v in screened.values() if v.candidate == c)
        r = S._full(req, s, check_parts)
        if r is not None and not r.fails and (best is None or r.cost < best.cost):
            best = r
    assert best is not None
    assert found.results[0].text == best.text


def test_an_impossible_requirement_says_what_is_nearest_and_what_relaxing_gives():
    data = tomllib.loads(SMALL)
    data["target"]["rated_power_w"] = 2000.0
    s = S.size(parse_requirement(data, "too-much.toml", DATA), top=3, accept=check_parts, full_checks=6)
    assert not s.results or s.results[0].fails
    assert "nearest" in s.closest or "no candidate" in s.closest
    assert "limits.max_disc_diameter_mm" in s.closest


@pytest.mark.parametrize(
    ("edit", "key", "words"),
    [
        ({"objective": "beauty"}, "objective", "must be one of cost, magnet_mass"),
        ({"colour": "red"}, "colour", "unknown key"),
        (
            {
                "target": {
                    "kind": "dc",
                    "voltage_v": 24.0,
                    "rated_current_a": 4.0,
                    "rated_rpm": 500.0,
                    "max_rpm": 700.0,
                }
            },
            "target.rated_power_w",
            "required",
        ),  # fmt: skip
        ({"objective": "annual_energy"}, "objective", "needs a wind [source]"),
        ({"limits": {"max_disc_diameter_mm": 20.0}}, "limits.max_disc_diameter_mm", "at least 60"),
        ({"limits": {"max_disc_diameter_mm": 300.0, "phases": 2}}, "limits.phases", "1, 3, or 0"),
        ({"magnets": {"stock": "missing.csv"}}, None, "no such file"),
    ],
)
def test_bad_requirements_are_one_line_errors(edit, key, words):
    data = tomllib.loads(SMALL) | edit
    with pytest.raises(DesignError) as info:
        parse_requirement(data, "need.toml", DATA)
    text = str(info.value)
    assert "\n" not in text and words in text, text
    if key:
        assert text.startswith(f"need.toml: {key}"), text


def test_size_from_the_command_line(run, tmp_path):
    (tmp_path / "one_block.csv").write_text((DATA / "one_block.csv").read_text())
    need = tmp_path / "bench-supply.toml"
    need.write_text(SMALL)
    out = tmp_path / "sized"
    result = run("size", need, "--out", out, "--json", "--top", "2")
    assert result.returncode == 0, result.stderr
    data = json.loads(result.stdout)
    assert data["screened"] > 0 and data["candidates"]
    first = data["candidates"][0]
    assert first["design_file"] and Path(first["design_file"]).exists()
    assert math.isfinite(first["cost"]) and first["missed_limits"] == []
    # the written design passes plan
    assert run("plan", first["design_file"]).returncode == 0
    svg = (out / "tradeoff.svg").read_text()
    assert svg.startswith("<svg") and "</svg>" in svg
    bad = tmp_path / "bad.toml"
    bad.write_text(SMALL.replace('objective = "cost"', 'objective = "beauty"'))
    result = run("size", bad)
    assert result.returncode == 2 and result.stderr.count("\n") == 1


def test_a_print_bed_too_small_for_the_mould_is_a_missed_limit():
    from fab.sizing import printed_size_mm

    data = tomllib.loads(SMALL)
    data["limits"]["print_bed_mm"] = 60.0
    req = parse_requirement(data, "small-bed.toml", DATA)
    s = S.size(req, top=2, accept=check_parts, printed_mm=printed_size_mm, full_checks=4, relax=False)
    assert s.results and all("print_bed_mm" in r.fails for r in s.results)
    assert printed_size_mm(s.results[0].design) > 60.0


def test_a_missed_voltage_limit_is_explained_and_its_waiver_re_run():
    # 24 V DC at 500 rpm but a shaft that can run away to 3000 rpm: unloaded it passes
    # extra-low voltage (IEC 61140: 120 V DC) whatever the turns
    data = tomllib.loads(SMALL)
    data["target"]["max_rpm"] = 3000.0
    s = S.size(parse_requirement(data, "runaway.toml", DATA), top=2, accept=check_parts, full_checks=4)
    assert s.results and all("elv_at_runaway" in r.fails for r in s.results)
    assert not any("danger voltage.above_elv" in r.fails for r in s.results)  # said once
    assert "above extra-low voltage (120 V DC)" in s.closest
    assert "limits.elv_at_runaway = false would give" in s.closest, s.closest


def test_no_sized_design_keeps_a_wire_eddy_loss_thinner_strands_would_cut():
    # re-run apart from the search: each thinner strand the advice would try, from the file
    from layout.advice import _output_w, _thinner_strands
    from layout.spec import with_values

    for r in demo_sizing().results:
        d = compute_design(parse_spec(tomllib.loads(r.text), "sized.toml"))
        if not any(w.code == "coil.wire_eddy" for w in d.warnings):
            continue
        for key, cap in _thinner_strands(d):
            try:
                again = compute_design(with_values(d.spec, ((key, cap),)))
            except DesignError:
                continue
            better = again.prediction.rated.efficiency > d.prediction.rated.efficiency
            kept = _output_w(again) >= (1 - S.FINER_OUTPUT_LOSS) * _output_w(d)
            assert not (better and kept and again.prediction.wire.strands <= S.MAX_STRANDS_IN_HAND), cap
