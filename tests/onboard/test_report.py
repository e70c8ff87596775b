"""Tests for the replay report (onboard.ashore.report): analysis helpers on hand-made rows, and a whole report."""

from __future__ import annotations

import base64
import html
import io
import re
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from replay_logs import CONDITION, VESSEL, simulate_frame, write_log

import onboard.ashore.report as report_module
import onboard.cli as cli
from advisor.advice import ADVISORY_NOTICE
from onboard.ashore.report import (
    RAMP_OKLCH,
    SECTIONS,
    U_TOP,
    advice_followed,
    over_limit_periods,
    prediction_stats,
    roll_identified_stats,
    utilisation_rgb,
    write_report,
)


def _frames(rows):
    """estimates/advice frames from (end 'HH:MM', heading, stw, util, adv_heading, adv_stw, status)."""
    est, adv = [], []
    for end, h, s, u, ah, as_, st in rows:
        e = pd.Timestamp(f"2026-03-01T{end}:00Z")
        est.append(
            {
                "window_start_utc": (e - pd.Timedelta("20min")).strftime("%Y-%m-%dT%H:%M:%SZ"),
                "window_end_utc": e.strftime("%Y-%m-%dT%H:%M:%SZ"),
            }
        )
        adv.append(
            {
                "window_end_utc": e.strftime("%Y-%m-%dT%H:%M:%SZ"),
                "heading_deg": h,
                "stw_kn": s,
                "utilisation": u,
                "limiting_criterion": "Roll (RMS)" if u > 1 else "Bridge acceleration",
                "advised_heading_deg": ah,
                "advised_stw_kn": as_,
                "status": st,
                "explanation": f"advice {end}",
            }
        )
    return pd.DataFrame(est), pd.DataFrame(adv)


def test_advice_followed_hand_computed():
    est, adv = _frames(
        [
            ("00:20", 100.0, 14.0, 1.2, 130.0, 14.0, "change"),  # heading change of 30° advised
            ("00:30", 100.0, 14.0, 1.1, 100.0, 10.0, "change"),  # speed reduction of 4 kn advised
            ("00:40", 125.0, 14.0, 0.9, 125.0, 14.0, "keep"),  # next of 00:20: 5° short of 130° → followed
            (
                "00:50",
                100.0,
                14.0,
                0.9,
                350.0,
                10.0,
                "change",
            ),  # next of 00:30: speed unchanged → not followed
            ("01:00", 110.0, 14.0, 0.9, 110.0, 14.0, "keep"),
            (
                "01:10",
                358.0,
                14.0,
                0.9,
                358.0,
                14.0,
                "keep",
            ),  # next of 00:50: heading across north, speed kept
        ]
    )
    f = advice_followed(est, adv).set_index("window_end_utc")
    # verdicts by hand from the rule in advice_followed's docstring (5°, 0.5 kn thresholds)
    assert f.loc["2026-03-01T00:20:00Z", "verdict"] == "followed"
    assert f.loc["2026-03-01T00:30:00Z", "verdict"] == "not followed"
    assert (
        f.loc["2026-03-01T00:50:00Z", "verdict"] == "partly followed"
    )  # 8° from 350° on the circle; speed not
    assert f.loc["2026-03-01T00:50:00Z", "next_heading_deg"] == 358.0
    assert len(f) == 3  # "keep" rows with advice equal to the actual values are not advised changes


def test_over_limit_periods_merge_overlapping_windows():
    est, adv = _frames(
        [
            ("00:20", 100.0, 14.0, 1.2, 130.0, 14.0, "change"),
            ("00:30", 100.0, 14.0, 1.4, 130.0, 12.0, "change"),
            ("00:40", 100.0, 14.0, 0.9, 100.0, 14.0, "keep"),
            ("00:50", 100.0, 14.0, 0.8, 100.0, 14.0, "keep"),
            ("01:30", 100.0, 14.0, 1.05, 90.0, 14.0, "change"),
        ]
    )
    p = over_limit_periods(est, adv)
    # windows 00:00-00:20 and 00:10-00:30 overlap → one period 00:00-00:30; 01:10-01:30 alone
    assert list(p["start_utc"]) == ["2026-03-01T00:00:00Z", "2026-03-01T01:10:00Z"]
    assert list(p["end_utc"]) == ["2026-03-01T00:30:00Z", "2026-03-01T01:30:00Z"]
    assert p["hours"].tolist() == pytest.approx([0.5, 1 / 3])
    assert p["max_utilisation"].tolist() == [1.4, 1.05]
    assert p["binding"].iloc[0] == "Roll (RMS)" and p["advice"].iloc[0] == "advice 00:20"


def test_prediction_stats_hand_computed():
    est = pd.DataFrame(
        {
            "roll_rms_deg": [1.0, 2.0, 4.0, np.nan],
            "predicted_roll_rms_deg": [1.1, 2.0, 3.2, 1.0],
            "pitch_rms_deg": [0.5, 0.5, 0.5, 0.5],
            "predicted_pitch_rms_deg": [np.nan] * 4,
            "heave_rms_m": [1.0, 1.0, 1.0, 1.0],
            "predicted_heave_rms_m": [1.0, 1.2, 0.8, 1.0],
        }
    )
    s = prediction_stats(est).set_index("channel")
    assert s.loc["roll", "pairs"] == 3
    assert s.loc["roll", "median_ratio"] == pytest.approx(1.0)  # ratios 1.1, 1.0, 0.8
    assert s.loc["roll", "correlation"] == pytest.approx(np.corrcoef([1, 2, 4], [1.1, 2.0, 3.2])[0, 1])
    assert s.loc["pitch", "pairs"] == 0 and np.isnan(s.loc["pitch", "median_ratio"])
    assert np.isnan(s.loc["heave", "correlation"])  # measured constant: no correlation defined


def test_roll_identified_stats_hand_computed():
    # invented rows: two conditions; NaN = a window whose roll was mostly wave-driven (no identification)
    est = pd.DataFrame(
        {
            "roll_period_measured_s": [18.0, 19.0, 20.0, np.nan, 12.0],
            "roll_period_condition_s": [20.6, 20.6, 20.6, np.nan, 14.4],
            "roll_damping_measured": [0.05, 0.07, np.nan, np.nan, 0.04],
            "implied_gm_m": [1.6, 1.45, 1.3, np.nan, 2.0],
            "roll_gm_warning": [1, 0, 0, np.nan, 1],
        }
    )
    s = roll_identified_stats(est).set_index("condition_s")
    assert list(s.index) == [14.4, 20.6]
    r = s.loc[20.6]
    assert r["windows"] == 3 and r["median_s"] == pytest.approx(19.0)  # median of 18, 19, 20
    assert r["p10_s"] == pytest.approx(18.2) and r["p90_s"] == pytest.approx(19.8)  # linear interpolation
    assert r["median_damping"] == pytest.approx(0.06) and r["median_gm_m"] == pytest.approx(1.45)
    assert r["gm_warnings"] == 1 and s.loc[14.4, "gm_warnings"] == 1
    assert roll_identified_stats(pd.DataFrame({"hs_m": [1.0]})).empty  # older estimates.csv: no table


def _page_script() -> str:
    return (Path(report_module.__file__).parents[1] / "live" / "web" / "static" / "bridge.js").read_text()


def _page_day_ramp() -> tuple[tuple[float, float, float], tuple[float, float, float]]:
    """RAMPS.day of the bridge page's script, read from the file itself."""
    js = _page_script()
    m = re.search(r"day:\s*\{\s*lo:\s*\[([^\]]+)\],\s*hi:\s*\[([^\]]+)\]", js)
    assert m, "RAMPS.day not found in bridge.js"
    lo, hi = (tuple(float(v) for v in g.split(",")) for g in m.groups())
    return lo, hi


def test_report_colour_ramp_is_the_pages_own():
    assert RAMP_OKLCH == _page_day_ramp()
    assert re.search(r"const U_TOP = ([0-9.]+)", _page_script()).group(1) == f"{U_TOP:g}"
    # what the two ends must look like (OKLCh (0.96, 0.035, 195°) pale cyan-white, (0.33, 0.13, 282°) dark
    # indigo; hue angles of OKLab, Ottosson 2020): properties only, not a second copy of the conversion
    ends = np.round(utilisation_rgb(np.array([0.0, U_TOP])) * 255)
    assert ends[0].min() > 200 and ends[0][2] > ends[0][0]  # pale cyan: light, more blue than red
    assert ends[1].max() < 130 and ends[1][2] > ends[1][0] > ends[1][1]  # dark indigo: blue > red > green
    # lightness falls monotonically with utilisation (readable in grey print), and saturates at U_TOP
    u = np.linspace(0, U_TOP, 26)
    grey = utilisation_rgb(u) @ np.array([0.2126, 0.7152, 0.0722])  # Rec. 709 luma weights
    assert np.all(np.diff(grey) < 0)
    assert np.allclose(utilisation_rgb(np.array([2.0])), utilisation_rgb(np.array([U_TOP])))
    # no alert colour anywhere on it: red never dominates (alarms are red on the bridge, common practice)
    rgb = utilisation_rgb(np.linspace(0, 2, 50))
    assert np.all(rgb[:, 0] <= rgb[:, 2] + 1e-9)


@pytest.fixture(scope="module")
def report(tmp_path_factory):
    """A short heavy-weather voyage (1 h 20 min, Hs 9 m on the beam, then an alteration), with --report."""
    d = tmp_path_factory.mktemp("report")

    def heading(t):
        return np.where(t < 2400.0, 100.0, 150.0)

    frame = simulate_frame(
        80 / 60, hs=9.0, tp=13.0, wave_from_deg=190.0, heading_deg=heading, speed_kn=14.0, seed=7
    )
    log = write_log(frame, d / "heavy.parquet")
    out = d / "out"
    mp = pytest.MonkeyPatch()
    try:
        mp.setattr(cli, "FEATURE_MODULES", ("onboard.ashore.replay",))
        rc = cli.main(
            [
                "replay",
                str(log),
                "--vessel",
                str(VESSEL),
                "--condition",
                CONDITION,
                "--out",
                str(out),
                "--workers",
                "1",
                "--no-progress",
                "--report",
            ]
        )
    finally:
        mp.undo()
    assert rc == 0
    return out, (out / "report.html").read_text(encoding="utf-8")


def test_report_has_every_section(report):
    _, text = report
    for sid, title in SECTIONS:
        assert f"<section id='{sid}'><h2>{title}</h2>" in text, sid
    figures = re.findall(r'<img src="data:image/png;base64,([^"]+)" alt="([^"]+)">', text)
    assert len(figures) == 3  # sea state, heading and speed against the limits, motions
    from PIL import Image  # reading the embedded figures back (pillow, a test-only dependency)

    for data, alt in figures:
        img = Image.open(io.BytesIO(base64.b64decode(data)))
        assert img.format == "PNG" and img.size[0] >= 900 and img.size[1] >= 400, alt
        assert alt.strip()
    assert html.escape(ADVISORY_NOTICE) in text  # the advisory caution, at the top and in its own section
    assert text.count("the master decides") >= 2


def test_report_is_self_contained(report):
    _, text = report
    assert "<script" not in text.lower()
    links = re.findall(r"""(?:src|href)\s*=\s*["']([^"']+)""", text)
    assert links and all(x.startswith(("#", "data:image/png;base64,")) for x in links), set(links)
    assert "http://" not in text.replace('xmlns="http://www.w3.org/2000/svg"', "")
    assert "https://" not in text


def test_report_tables_match_the_csv_files(report):
    out, text = report
    adv = pd.read_csv(out / "advice.csv")
    est = pd.read_csv(out / "estimates.csv")
    over = adv["utilisation"] > 1.0
    if over.any():
        assert "No window was over a limit" not in text
        assert adv.loc[over, "limiting_criterion"].iloc[0] in text
    else:
        assert "No window was over a limit at the actual heading and speed." in text
    f = advice_followed(est, adv)
    for v in f["verdict"]:
        assert f"<td>{v}</td>" in text
    # the alteration from 100° to 150° at 00:40 shows in the heading column of the advice
    assert adv["heading_deg"].iloc[0] == pytest.approx(100.0, abs=0.1)
    assert adv["heading_deg"].iloc[-1] == pytest.approx(150.0, abs=0.1)
    assert f"{len(est)} ({int((est['status'] == 'ok').sum())} with a sea-state estimate)" in text
    # the identified roll period: the table agrees with the csv (or says why there is none)
    assert "Roll period identified from the measured roll" in text
    ident = est["roll_period_measured_s"].notna() if "roll_period_measured_s" in est else pd.Series(False)
    if ident.any():
        roll = roll_identified_stats(est)
        assert int(roll["windows"].sum()) == int(ident.sum())
        assert f"GM warnings: {int(est['roll_gm_warning'].fillna(0).sum())}" in text
        assert f"<td class='num'>{roll['median_s'].iloc[0]:.1f}</td>" in text
    else:
        assert "No window allowed the roll period to be identified" in text


def test_report_needs_the_replay_files(tmp_path):
    with pytest.raises(FileNotFoundError, match="estimates.csv and advice.csv are needed"):
        write_report(tmp_path)
