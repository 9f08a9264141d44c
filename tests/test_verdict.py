"""The report's first screen: the verdict, with every requirement quoted as written.

Check values: a drag count is 0.0001 of CD (the trade's unit; common practice, no source); an
uncertainty is given to two significant digits (JCGM 100:2008 7.2.6); the statuses are those of
the run's own requirement checks.  The study is invented (inputs, not check values).
"""

from __future__ import annotations

import re
import tomllib

import pytest

from simunc.pipeline import run
from simunc.report.content import build, verdict_lines
from simunc.report.render import html_page
from simunc.report.text import unmarked
from simunc.study.readers import parse_study
from tests import test_scale_effect as scale_effect

TEXT = scale_effect.STUDY + """
[[requirement]]
output = "drag_coefficient"
expanded_uncertainty = "2 counts"
[[requirement]]
output = "lift_coefficient"
expanded_uncertainty = "0.00001"
[design]
trials = 2000
verify_trials = 4000
"""


@pytest.fixture(scope="module")
def result():
    return run(parse_study(tomllib.loads(TEXT)), trials=4000, parts=("requirements",))


def test_verdict_comes_first_and_quotes_every_requirement(result):
    blocks = build(result)
    assert [unmarked(b.content) for b in blocks if b.kind == "heading"][1] == "Verdict"
    lines = [unmarked(x).replace("**", "") for x in verdict_lines(result)]
    # the study cannot reach the Reynolds number: said first, requirements still judged
    assert "NOT reachable" in lines[0]
    checks = result.requirement_checks
    assert f"{sum(c.met for c in checks)} of {len(checks)} met" in " ".join(lines)
    for c in checks:
        line = next(x for x in lines if c.text in x)
        number = int(c.key.split("[")[1].rstrip("]")) + 1     # numbered from 1, as in the file
        assert line.startswith(f"Requirement {number} " + ("met" if c.met else "NOT met"))
        if c.output == "drag_coefficient":
            counts = re.search(r"achieved U = ([0-9.]+) counts", line).group(1)
            assert float(counts) == pytest.approx(c.value / 1e-4, rel=0.05)
            assert len(counts.replace(".", "").lstrip("0")) == 2  # two significant digits


def test_html_has_contents_and_folds_the_details(result):
    page = html_page(build(result), {})
    assert '<nav class="toc">' in page and 'href="#s1"' in page
    assert page.count("<details>") == page.count("</details>") >= 2
    assert page.index("Verdict") < page.index("<details>")


def test_values_are_rounded_to_their_uncertainty():
    # JCGM 100:2008 7.2.2 example (from memory of that document): m_s = 100.02147 g with
    # u_c = 0.35 mg is written 100.02147 g, u = 0.35 mg; and 7.2.6: u to two significant digits.
    from simunc.report.text import with_uncertainty

    assert with_uncertainty(100.021471, 0.000352) == ("100.02147", "0.00035")
    assert with_uncertainty(0.98765, 0.0123) == ("0.988", "0.012")
    assert with_uncertainty(12345.6, 78.9) == ("12346", "79")


def test_key_outputs_come_before_the_full_list(result):
    heads = [unmarked(b.content) for b in build(result) if b.kind == "heading"]
    assert heads.index("Key outputs") < heads.index(
        "Appendix B. Achieved groups and flow quantities (Monte Carlo, JCGM 101)")
    # the details follow the main sections, lettered in order (an appendix of the Markdown)
    appendix = [h for h in heads if h.startswith("Appendix")]
    assert heads[-len(appendix):] == appendix and heads.index("Safety") < heads.index(appendix[0])
    assert [h.split(".")[0] for h in appendix] == [f"Appendix {c}" for c in "ABCDEFG"[
        :len(appendix)]] and len(appendix) >= 6, appendix
