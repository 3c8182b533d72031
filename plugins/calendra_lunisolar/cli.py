"""Commands of the lunisolar plugin: year tables with margins, festival tables, Easter, Hijri comparison,
attested Babylonian month lengths, Chinese solar terms.

Built by :func:`commands` (called from the ``calendra_cli_commands`` hook), which imports click; the
heavy modules are imported inside each command.
"""

from __future__ import annotations

CAUTION = ("predictions under a stated rule and criterion: where a calendar governs religious practice "
           "(month beginnings by sighting, festival dates), the community's own authority decides")


def _emit(text):
    import click

    click.echo(text)


def _provenance(calendars=(), deltat=None, jd_tt=None, models=None, warnings=()):
    """The project's provenance dict (calendars, delta T over the result's instants, models, warnings)."""
    import numpy as np

    from calendra.provenance import build

    jd = None if jd_tt is None else np.asarray(jd_tt, dtype=float)
    return build(jd_tt=jd, deltat=deltat, calendars=calendars, ephemeris=True, models=models or {},
                 extra_warnings=list(warnings) + [CAUTION])


def _render(rows, cols, headers, fmt, title, provenance):
    from calendra.output import render_csv, render_json, render_table

    if fmt == "json":
        return render_json({"title": title, "rows": rows, "provenance": provenance})
    if fmt == "csv":
        return render_csv(rows, cols)
    return render_table(rows, cols, headers, title=title, provenance=provenance)


def commands() -> list:
    import click

    fmt_option = click.option("--format", "fmt", type=click.Choice(["table", "json", "csv"]), default="table",
                              show_default=True, help="Output format.")
    year_args = {"ignore_unknown_options": True}        # "-500" is a year, not an option

    @click.command("lunisolar-year", context_settings=year_args)
    @click.argument("calendar_name", metavar="CAL")
    @click.argument("year", type=int)
    @fmt_option
    def lunisolar_year(calendar_name, year, fmt):
        """Months of YEAR in a sky calendar (babylonian, chinese, islamic-observed, a TOML one): month starts,
        lengths, the leap month, and the margin of each month start.

        CAL may carry options, e.g. babylonian[criterion=yallop] or chinese[meridian=116.4].
        """
        from calendra.errors import ParameterError
        from calendra.pluginmanager import get_host

        cal = get_host().calendars.get(calendar_name)
        if not hasattr(cal, "year_rows"):
            raise ParameterError(f"calendar {cal.label} is not a sky calendar of the lunisolar plugin")
        rows = cal.year_rows(year)
        base = ["month", "leap", "name", "days", "first_julian", "first_gregorian"]
        extra = [c for c in rows[0] if c not in base + ["lunation", "first_jdn", "intercalation"]] if rows else []
        cols = [c for c in base if rows and c in rows[0]] + extra
        desc = cal.describe()
        models = {"month starts": desc.get("month_starts", "")}
        if "intercalation" in desc:
            models["intercalation"] = desc["intercalation"]
        if rows and "intercalation" in rows[0]:
            models[f"year {year}"] = rows[0]["intercalation"]
        if "margin" in extra:
            models["margin"] = ("criterion value minus threshold on the first visible evening, or threshold minus "
                                "value on the evening before, whichever is smaller (criterion units); fragile: "
                                "below the plugin's FRAGILE_MARGIN")
        jd = [r["first_jdn"] for r in rows]
        prov = _provenance([cal], getattr(cal, "deltat", None), jd, models)
        label = getattr(cal, "year_label", str)(year)
        _emit(_render(rows, cols, cols, fmt, f"{cal.label} {label}: {len(rows)} months", prov))

    @click.command("festival")
    @click.argument("rules", metavar="RULE_OR_FILE")
    @click.option("--from", "y0", type=int, required=True, help="First Gregorian year.")
    @click.option("--to", "y1", type=int, required=True, help="Last Gregorian year.")
    @click.option("--site", default=None, help="Default place for dating instants (a rule's 'at' wins).")
    @click.option("--zone", default=None, help="Default zone (UTC+8, 120E) when no site is given.")
    @click.option("--delta-t", "deltat", default=None, help="Delta-T model.")
    @click.option("--name", default=None, help="Festival name for a rule given on the command line.")
    @click.option("--format", "fmt", type=click.Choice(["table", "json", "csv", "ics"]), default="table",
                  show_default=True)
    def festival(rules, y0, y1, site, zone, deltat, name, fmt):
        """Dates of festival rules for the years --from..--to.

        RULE_OR_FILE is a rule ("first full moon after march equinox at Jerusalem, then next sunday") or a
        TOML file of [[festival]] tables (name, rule, description, days) with an optional [community]
        (site, zone). See 'calendra festival --help' and the rule grammar in calendra_lunisolar.rules.
        """
        import os

        from calendra.output import render_table

        from .festivals import TABLE_COLUMNS, festival_table, load_rules_file, to_csv, to_ics, to_json

        if os.path.exists(rules) and rules.lower().endswith(".toml"):
            data = load_rules_file(rules)
            comm = data["community"]
            fests = data["festivals"]
            site = site or comm.get("site")
            zone = zone or comm.get("zone")
            title = comm.get("name", rules)
        else:
            fests = [{"name": name or rules, "rule": rules}]
            title = name or "festival rule"
        rows, prov = festival_table(fests, y0, y1, site=site, zone=zone, deltat=deltat)
        if fmt == "ics":
            _emit(to_ics(rows, title))
        elif fmt == "csv":
            _emit(to_csv(rows).rstrip("\n"))
        elif fmt == "json":
            _emit(to_json(rows, prov))
        else:
            import numpy as np

            models = {f"rule '{k}'": v for k, v in prov["rules"].items()}
            inst = [r["instant_ut"] for r in rows if np.isfinite(r["instant_ut"])]
            from calendra.deltat import get_model

            full = _provenance(deltat=get_model(deltat), jd_tt=inst or None, models=models)
            _emit(render_table(rows, TABLE_COLUMNS, ["festival", "date (rule's calendar)", "gregorian", "julian",
                                                     "weekday", "JDN"], title=f"{title}: {len(rows)} dates",
                               provenance=full))

    @click.command("easter")
    @click.option("--from", "y0", type=int, required=True)
    @click.option("--to", "y1", type=int, required=True)
    @click.option("--differ", is_flag=True, help="Only the years where the three methods give different days.")
    @click.option("--time", "time_", type=click.Choice(["apparent", "mean"]), default="apparent", show_default=True,
                  help="Solar time of Jerusalem dating the full moon of the astronomical Easter.")
    @fmt_option
    def easter(y0, y1, differ, time_, fmt):
        """Easter Sunday by the Gregorian computus, the Julian computus (a Julian date, also shown in the
        Gregorian calendar) and the astronomical rule (Jerusalem), years --from..--to."""
        from .festivals import CAUTION as FCAUTION, easter_table

        rows = easter_table(y0, y1, time=time_)
        if differ:
            rows = [r for r in rows if r["differ"]]
        cols = ["year", "gregorian", "julian_computus", "julian_computus_gregorian", "astronomical", "differ"]
        models = {"gregorian": "Meeus, Astronomical Algorithms (1998), ch. 8, Gregorian calendar",
                  "julian": "Meeus ch. 8, Julian algorithm: a date of the Julian calendar",
                  "astronomical": f"first Sunday after the first full moon after the March equinox (DE406), the "
                                  f"full moon dated in {time_} solar time of Jerusalem"}
        prov = _provenance(deltat=__import__("calendra.deltat", fromlist=["get_model"]).get_model(None),
                           jd_tt=[r["astronomical_jdn"] for r in rows] or None, models=models,
                           warnings=[FCAUTION])
        _emit(_render(rows, cols, cols, fmt, f"Easter {y0}..{y1}", prov))

    @click.command("hijri-compare")
    @click.option("--site", default="Mecca", show_default=True)
    @click.option("--criterion", default="yallop", show_default=True, help="yallop, odeh or lag.")
    @click.option("--year", type=int, required=True, help="AH year.")
    @click.option("--tabular", default="islamic", show_default=True, help="The tabular calendar to compare with.")
    @fmt_option
    def hijri_compare(site, criterion, year, tabular, fmt):
        """Months of AH YEAR by predicted first sighting at SITE next to the tabular Islamic calendar."""
        from calendra.pluginmanager import get_host

        from .islamic_observed import ObservedIslamicCalendar, compare_with_tabular

        obs = ObservedIslamicCalendar(site=site, criterion=criterion)
        tab = get_host().calendars.get(tabular)
        rows = compare_with_tabular(obs, year, tab)
        vname = obs.crescents.criterion.value_name
        cols = ["month", "name", "evening_gregorian", "first_gregorian", "tabular_gregorian", "difference_days",
                "days", vname, "category", "margin", "fragile"]
        models = {"observed": obs.crescents.describe(), "tabular": tab.label + ": " + tab.description,
                  "difference": "observed first day minus tabular first day, days",
                  "Umm al-Qura": "a rule of its own (not computed here)"}
        prov = _provenance([obs, tab], obs.deltat, [r["first_jdn"] for r in rows], models)
        _emit(_render(rows, cols, cols, fmt, f"AH {year}: {obs.label} vs {tab.label}", prov))

    @click.command("babylonian-check")
    @click.argument("attestations", metavar="FILE.toml", required=False)
    @click.option("--criterion", default="lag", show_default=True)
    @click.option("--only-disagreements", is_flag=True)
    @fmt_option
    def babylonian_check(attestations, criterion, only_disagreements, fmt):
        """Compare attested Babylonian month lengths (a TOML table) with the computed ones; the criterion's
        value on the evening that decides 29 or 30 days shows how firm each computed length is."""
        from calendra.errors import ParameterError

        from .babylonian import BabylonianCalendar, check_attested

        opts = {"criterion": criterion}
        if attestations:
            opts["attested"] = attestations
        cal = BabylonianCalendar(**opts)
        if not cal.attestations.lengths:
            raise ParameterError("no attested month lengths: give a TOML file with [[month_length]] tables "
                                 "(or set CALENDRA_BABYLONIAN)")
        rows = check_attested(cal)
        if only_disagreements:
            rows = [r for r in rows if not r["agree"]]
        cols = ["year", "month", "first_julian", "attested_days", "computed_days", "agree",
                "day29_evening_value", "threshold", "margin", "fragile", "source"]
        n_bad = sum(not r["agree"] for r in rows)
        models = {"month starts": cal.crescents.describe(),
                  "computed": "from the month's start in the calendar (earlier attested lengths applied) to the "
                              "sky's start of the next month, bounded to 29..30 days",
                  "attestations": ", ".join(cal.attestations.files)}
        prov = _provenance([cal], cal.deltat, None, models)
        _emit(_render(rows, cols, cols, fmt, f"attested month lengths: {len(rows)} checked, {n_bad} disagree", prov))

    @click.command("solar-terms")
    @click.argument("year", type=int)
    @click.option("--meridian", default="120", show_default=True)
    @fmt_option
    def solar_terms(year, meridian, fmt):
        """The 24 solar terms of Gregorian YEAR with their local dates (Chinese calendar's meridian)."""
        from .chinese import ChineseCalendar

        cal = ChineseCalendar(meridian=meridian)
        rows = cal.solar_terms(year)
        cols = ["longitude", "name", "principal", "local_date", "local_time", "margin_min"]
        prov = _provenance([cal], cal.deltat, [r["jd_tt"] for r in rows],
                           {"day count": cal.local.describe(), "margin_min": "minutes from the nearest local midnight"})
        _emit(_render(rows, cols, cols, fmt, f"solar terms {year}", prov))

    return [lunisolar_year, festival, easter, hijri_compare, babylonian_check, solar_terms]
