"""The report page's blocks: escaping, number formatting, generic rendering of summary keys."""

from atticsim.report.html import generic_page, summary_table
from atticsim.report.labels import label, unit
from atticsim.report.page import fmt


def test_text_is_escaped_and_the_page_loads_nothing_else():
    html = generic_page("<b>house & co</b>", "sub", [("house", "<script>x</script>")], {"fan_starts": 3})
    assert "<script>" not in html and "&lt;script&gt;" in html and "&lt;b&gt;house &amp; co&lt;/b&gt;" in html
    assert "Content-Security-Policy" in html and "default-src 'none'" in html
    assert "http://" not in html and "https://" not in html


def test_new_summary_keys_appear_with_words_and_units():
    # a key the page has never heard of is shown with its unit read from its ending
    s = {"heating_penalty_kwh": 12.5, "cooling_season_days": 120, "attic_air_min_c": 3.25}
    html = summary_table(s, "ip")
    assert "heating penalty" in html and "12.5 kWh" in html and "(42.7 kBtu)" in html
    assert "attic air min" in html and "3.25 °C" in html and "(37.9 °F)" in html
    assert label("cooling_season_days") == "cooling season days" and unit("fan_flow_mean_m3s") == "m³/s"
    page = generic_page("t", "s", [], s, warnings=["w1"])
    assert "heating penalty" in page and "w1" in page


def test_number_formatting():
    assert fmt(50.6381) == "50.6" and fmt(7) == "7" and fmt(1234.5) == "1,234" and fmt(0.0425) == "0.0425"
    assert fmt(None) == "n/a" and fmt(float("nan")) == "n/a" and fmt(-1.09e-14) == "-1.09e-14"


def test_season_cards_only_for_seasons_in_the_period_and_parts_that_are_not_zero():
    """A summer week's page shows the cooling savings but no heating card (no heated day), and no card for a
    part that is zero; a period with heated days shows the heating penalty even when it is zero."""
    from atticsim.report.html import answer_cards

    s = {"fan_run_hours": 50.0, "days_cooling": 7, "days_heating": 0, "cooling_savings_kwh": 2.41,
         "cooling_air_cost_kwh": 0.0, "heating_penalty_kwh": 0.0, "heating_penalty_air_kwh": 0.0,
         "net_benefit_kwh": -6.64}
    page = answer_cards(s)
    assert "2.41 kWh" in page and "cooling savings" in page
    assert "heating" not in page and "cooling air cost" not in page
    page = answer_cards({**s, "days_heating": 3, "cooling_air_cost_kwh": 0.8})
    assert "heating penalty" in page and "heating penalty air" not in page
    assert "cooling air cost" in page and "0.800 kWh" in page
