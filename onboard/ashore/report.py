"""The replay report: one self-contained HTML file a superintendent can read.

:func:`write_report` reads what ``hwadvice replay`` wrote to its output directory (``estimates.csv``,
``advice.csv``, ``envelope.csv``, ``skipped.txt``) and writes ``report.html``: no scripts, no external
files, every figure drawn with matplotlib (Agg canvas, no pyplot state) and embedded as a base64 PNG.
Sections (ids in brackets):

1. Summary (``summary``) - the voyage in a table;
2. Sea state (``sea-state``) - estimated Hs and peak period over time with the estimator's confidence;
3. Heading and speed against the limits (``envelope``) - the conservative utilisation of every heading
   at the ship's speed over time, with the heading steered and the heading advised; the speed made
   with the highest speed inside the limits at that heading and the speed advised;
4. Times over a limit (``over-limit``) - every period with utilisation above 1, the binding limit and
   the advice given at its start;
5. Was the advice followed (``followed``) - for every advised change, whether heading and speed in the
   next window moved towards it (:func:`advice_followed`);
6. Predicted and measured motions (``motions``) - RMS roll, pitch and heave predicted from the
   previous window's estimate through the RAOs against those measured (:func:`prediction_stats`);
7. What could not be replayed (``skipped``);
8. How to read this report (``caution``) - the advisory caution.

The colour ramp of utilisation is the bridge page's own (:data:`RAMP_OKLCH`): pale to dark through
cyan-blue to indigo, lightness falling monotonically (it reads in grey print and for colour-blind
readers), no alert colour; cells over a limit are hatched, as on the page, and the limit itself is
drawn as a dashed black line where it applies.

Advisory only: the master decides. Replayed advice does not replace the ship's approved stability
information, loading computer, cargo securing manual or seamanship; local regulations and licensed
practice come first.
"""

from __future__ import annotations

import base64
import html
import io
import math
from collections.abc import Sequence
from datetime import UTC
from pathlib import Path

import numpy as np
import pandas as pd

from advisor.advice import ADVISORY_NOTICE
from estimator.pipeline import GM_WARNING
from onboard.formats.text import write_text_atomic

__all__ = [
    "FOLLOW_HEADING_DEG",
    "FOLLOW_SPEED_KN",
    "SECTIONS",
    "advice_followed",
    "over_limit_periods",
    "prediction_stats",
    "write_report",
]

SECTIONS = (
    ("summary", "Summary"),
    ("sea-state", "Sea state"),
    ("envelope", "Heading and speed against the limits"),
    ("over-limit", "Times over a limit"),
    ("followed", "Was the advice followed"),
    ("motions", "Predicted and measured motions"),
    ("skipped", "What could not be replayed"),
    ("caution", "How to read this report"),
)
"""(id, title) of every section, in order."""

FOLLOW_HEADING_DEG = 5.0
"""A heading change counts as advised when the advice differs by at least this much, and as
reached within it [deg] (project choice: about twice the heading wander of an autopilot in a seaway,
common practice)."""

FOLLOW_SPEED_KN = 0.5
"""The same for speed [kn] (project choice)."""

CAUTION = (
    ADVISORY_NOTICE + " This report replays recorded motions through the same estimator and advisor as on "
    "board; it shows what the advice would have been, not what the ship should have done. Estimates carry "
    "the estimator's own confidence; read low-confidence periods with care."
)


# ----------------------------------------------------------------------------------------------- analysis


def _time(s: pd.Series) -> pd.Series:
    return pd.to_datetime(s, utc=True, format="ISO8601")


def _circ_diff(a, b):
    return np.abs((np.asarray(a, float) - np.asarray(b, float) + 180.0) % 360.0 - 180.0)


def advice_followed(estimates: pd.DataFrame, advice: pd.DataFrame) -> pd.DataFrame:
    """For every advised change, did the ship move towards it in the next window?

    The next window is the one that starts where the advised window ends (no overlap, so its mean
    heading and speed are new data). A component (heading or speed) counts as advised when the
    advised value differs from the actual one by at least :data:`FOLLOW_HEADING_DEG` /
    :data:`FOLLOW_SPEED_KN`; it was followed when the next window's value is closer to the advised one
    by at least half that amount, or within it.

    Parameters
    ----------
    estimates, advice : DataFrame
        ``estimates.csv`` and ``advice.csv`` as written by replay (same rows in the same order).

    Returns
    -------
    DataFrame
        One row per window with an advised change: ``window_end_utc``, ``heading_deg``, ``stw_kn``,
        ``advised_heading_deg``, ``advised_stw_kn``, ``next_heading_deg``, ``next_stw_kn``, ``verdict``
        (``followed``, ``partly followed``, ``not followed``, ``no later data``), ``explanation``.
    """
    cols = [
        "window_end_utc",
        "heading_deg",
        "stw_kn",
        "advised_heading_deg",
        "advised_stw_kn",
        "next_heading_deg",
        "next_stw_kn",
        "verdict",
        "explanation",
    ]
    if advice.empty:
        return pd.DataFrame(columns=cols)
    start = dict(zip(estimates["window_start_utc"], range(len(estimates)), strict=True))
    rows = []
    for i, a in advice.iterrows():
        if not np.isfinite(a.get("advised_heading_deg", np.nan)) or not np.isfinite(
            a.get("heading_deg", np.nan)
        ):
            continue
        dh = float(_circ_diff(a["advised_heading_deg"], a["heading_deg"]))
        ds = abs(float(a["advised_stw_kn"]) - float(a["stw_kn"]))
        want_h, want_s = dh >= FOLLOW_HEADING_DEG, ds >= FOLLOW_SPEED_KN
        if not (want_h or want_s):
            continue
        j = start.get(a["window_end_utc"])
        nxt = advice.iloc[j] if j is not None else None
        if nxt is None or not np.isfinite(nxt["heading_deg"]):
            verdict, nh, ns = "no later data", np.nan, np.nan
        else:
            nh, ns = float(nxt["heading_deg"]), float(nxt["stw_kn"])
            ok = []
            if want_h:
                left = float(_circ_diff(a["advised_heading_deg"], nh))
                ok.append(left <= FOLLOW_HEADING_DEG or left <= dh - FOLLOW_HEADING_DEG / 2)
            if want_s:
                left = abs(float(a["advised_stw_kn"]) - ns)
                ok.append(left <= FOLLOW_SPEED_KN or left <= ds - FOLLOW_SPEED_KN / 2)
            verdict = "followed" if all(ok) else ("partly followed" if any(ok) else "not followed")
        rows.append(
            [
                a["window_end_utc"],
                a["heading_deg"],
                a["stw_kn"],
                a["advised_heading_deg"],
                a["advised_stw_kn"],
                nh,
                ns,
                verdict,
                a.get("explanation", ""),
            ]
        )
        del i
    return pd.DataFrame(rows, columns=cols)


def over_limit_periods(estimates: pd.DataFrame, advice: pd.DataFrame, threshold: float = 1.0) -> pd.DataFrame:
    """Contiguous periods with the (conservative) utilisation at the actual heading and speed above 1.

    Windows belong to the same period when each starts before the previous one ends (overlapping or
    adjacent windows).

    Returns
    -------
    DataFrame
        ``start_utc``, ``end_utc``, ``hours``, ``windows``, ``max_utilisation``, ``binding`` (limits in
        order of how often they bound), ``advice`` (the advice sentence at the period's first window),
        ``advised_heading_deg``, ``advised_stw_kn``.
    """
    cols = [
        "start_utc",
        "end_utc",
        "hours",
        "windows",
        "max_utilisation",
        "binding",
        "advice",
        "advised_heading_deg",
        "advised_stw_kn",
    ]
    if advice.empty:
        return pd.DataFrame(columns=cols)
    over = (advice["utilisation"].to_numpy(float) > threshold) & np.isfinite(
        advice["utilisation"].to_numpy(float)
    )
    starts = _time(estimates["window_start_utc"])
    ends = _time(advice["window_end_utc"])
    periods: list[list[int]] = []
    for i in np.flatnonzero(over):
        if periods and starts.iloc[i] <= ends.iloc[periods[-1][-1]]:
            periods[-1].append(int(i))
        else:
            periods.append([int(i)])
    rows = []
    for idx in periods:
        sub = advice.iloc[idx]
        binding = sub["limiting_criterion"].fillna("").value_counts()
        first = sub.iloc[0]
        rows.append(
            [
                estimates["window_start_utc"].iloc[idx[0]],
                advice["window_end_utc"].iloc[idx[-1]],
                (ends.iloc[idx[-1]] - starts.iloc[idx[0]]).total_seconds() / 3600.0,
                len(idx),
                float(sub["utilisation"].max()),
                "; ".join(str(b) for b in binding.index if b),
                first.get("explanation", ""),
                first["advised_heading_deg"],
                first["advised_stw_kn"],
            ]
        )
    return pd.DataFrame(rows, columns=cols)


def prediction_stats(estimates: pd.DataFrame) -> pd.DataFrame:
    """Agreement of predicted and measured RMS motions per channel.

    Returns
    -------
    DataFrame
        Per channel (``roll``, ``pitch``, ``heave``): ``pairs`` (windows with both), ``median_ratio``
        (predicted ÷ measured), ``p10_ratio``, ``p90_ratio``, ``correlation`` (Pearson, NaN with fewer
        than 3 pairs).
    """
    out = []
    for ch, unit in (("roll", "deg"), ("pitch", "deg"), ("heave", "m")):
        m = estimates.get(f"{ch}_rms_{unit}")
        p = estimates.get(f"predicted_{ch}_rms_{unit}")
        if m is None or p is None:
            out.append([ch, 0, np.nan, np.nan, np.nan, np.nan])
            continue
        m, p = m.to_numpy(float), p.to_numpy(float)
        ok = np.isfinite(m) & np.isfinite(p) & (m > 0)
        if not ok.any():
            out.append([ch, 0, np.nan, np.nan, np.nan, np.nan])
            continue
        r = p[ok] / m[ok]
        corr = (
            float(np.corrcoef(m[ok], p[ok])[0, 1])
            if ok.sum() >= 3 and np.std(m[ok]) > 0 and np.std(p[ok]) > 0
            else np.nan
        )
        out.append(
            [
                ch,
                int(ok.sum()),
                float(np.median(r)),
                float(np.percentile(r, 10)),
                float(np.percentile(r, 90)),
                corr,
            ]
        )
    return pd.DataFrame(
        out, columns=["channel", "pairs", "median_ratio", "p10_ratio", "p90_ratio", "correlation"]
    )


# ----------------------------------------------------------------------------------------------- drawing

U_TOP = 1.25
"""Utilisation at the dark end of the colour ramp [-] (as on the bridge page)."""

RAMP_OKLCH = ((0.96, 0.035, 195.0), (0.33, 0.13, 282.0))
"""The bridge page's own day ramp (``onboard/live/web/static/bridge.js``, ``RAMPS.day``): OKLCh
(lightness, chroma, hue in degrees) at utilisation 0 and at :data:`U_TOP`, interpolated on a straight
line in OKLab (Ottosson 2020, "A perceptual color space for image processing"). Lightness falls
monotonically, so the order reads in grey print and for colour-blind readers, and the hues stay between
cyan-blue and indigo, away from the alert colours; above utilisation 1 the cells are hatched, as on the
page."""

_BLUE, _ORANGE, _BLACK, _PURPLE, _ADVISED = "#1f5a99", "#c2650a", "#222222", "#6a3d9a", "#e8a33d"
_NODATA = "#ebebeb"


def roll_identified_stats(estimates: pd.DataFrame) -> pd.DataFrame:
    """The roll natural period identified from the measured roll over the voyage, against the condition's.

    The identification is :func:`estimator.pipeline.roll_period_check` (spectral peak of the measured roll,
    damping from its half-power bandwidth); the GM implied by the period follows the IMO IS Code 2008
    roll-period formula (Part A 2.3.4), and a warning is counted when it differs from the condition's GM
    by more than :data:`estimator.pipeline.GM_WARNING`.

    Parameters
    ----------
    estimates : DataFrame
        ``estimates.csv`` as written by replay (columns ``roll_period_measured_s``,
        ``roll_period_condition_s``, ``roll_damping_measured``, ``implied_gm_m``, ``roll_gm_warning``; absent
        columns give an empty table).

    Returns
    -------
    DataFrame
        One row per condition roll period: ``condition_s``, ``windows`` (with an identified period),
        ``median_s``, ``p10_s``, ``p90_s``, ``median_damping``, ``median_gm_m``, ``gm_warnings``.
    """
    cols = ["condition_s", "windows", "median_s", "p10_s", "p90_s", "median_damping", "median_gm_m",
            "gm_warnings"]
    need = ("roll_period_measured_s", "roll_period_condition_s")
    if any(c not in estimates for c in need):
        return pd.DataFrame(columns=cols)
    d = estimates[np.isfinite(estimates["roll_period_measured_s"].to_numpy(float))]
    rows = []
    for cond, g in d.groupby(d["roll_period_condition_s"].astype(float).round(2), dropna=False):
        t = g["roll_period_measured_s"].to_numpy(float)

        def med(col, g=g):
            v = g[col].to_numpy(float) if col in g else np.zeros(0)
            v = v[np.isfinite(v)]
            return float(np.median(v)) if v.size else np.nan

        warn = g["roll_gm_warning"].fillna(0).astype(float) if "roll_gm_warning" in g else pd.Series(0.0)
        rows.append({"condition_s": float(cond), "windows": int(t.size), "median_s": float(np.median(t)),
                     "p10_s": float(np.percentile(t, 10)), "p90_s": float(np.percentile(t, 90)),
                     "median_damping": med("roll_damping_measured"), "median_gm_m": med("implied_gm_m"),
                     "gm_warnings": int((warn > 0).sum())})
    return pd.DataFrame(rows, columns=cols)


def _oklab_to_srgb(lab: np.ndarray) -> np.ndarray:
    """OKLab (…, 3) → sRGB in [0, 1] (Ottosson 2020, the page's ``oklabToRgb``; clipped to the gamut)."""
    L, a, b = lab[..., 0], lab[..., 1], lab[..., 2]
    lms = np.stack(
        [
            (L + 0.3963377774 * a + 0.2158037573 * b) ** 3,
            (L - 0.1055613458 * a - 0.0638541728 * b) ** 3,
            (L - 0.0894841775 * a - 1.291485548 * b) ** 3,
        ],
        axis=-1,
    )
    m = np.array(
        [
            [4.0767416621, -3.3077115913, 0.2309699292],
            [-1.2684380046, 2.6097574011, -0.3413193965],
            [-0.0041960863, -0.7034186147, 1.707614701],
        ]
    )
    lin = np.clip(lms @ m.T, 0.0, 1.0)
    return np.where(lin <= 0.0031308, 12.92 * lin, 1.055 * lin ** (1 / 2.4) - 0.055)


def utilisation_rgb(u) -> np.ndarray:
    """sRGB (…, 3) in [0, 1] of utilisation values on the page's ramp (saturating at :data:`U_TOP`; NaN
    gives NaN)."""
    u = np.asarray(u, float)
    t = np.clip(u / U_TOP, 0.0, 1.0)[..., None]
    (l0, c0, h0), (l1, c1, h1) = RAMP_OKLCH
    lo = np.array([l0, c0 * math.cos(math.radians(h0)), c0 * math.sin(math.radians(h0))])
    hi = np.array([l1, c1 * math.cos(math.radians(h1)), c1 * math.sin(math.radians(h1))])
    rgb = _oklab_to_srgb(lo + (hi - lo) * t)
    rgb[~np.isfinite(u)] = np.nan
    return rgb


def _colormap():
    from matplotlib.colors import ListedColormap, Normalize

    cmap = ListedColormap(utilisation_rgb(np.linspace(0.0, U_TOP, 256)), name="utilisation")
    return cmap.with_extremes(bad=_NODATA), Normalize(0.0, U_TOP)


def _figure(rows: Sequence[float], width_in: float = 9.0):
    """A matplotlib figure (Agg canvas, no pyplot state) with stacked axes sharing the time axis."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=(width_in, sum(rows)), layout="constrained")
    FigureCanvasAgg(fig)
    axes = fig.subplots(len(rows), 1, sharex=True, gridspec_kw={"height_ratios": list(rows)}, squeeze=False)
    return fig, list(axes[:, 0])


def _time_axis(ax, label: bool = True) -> None:
    import matplotlib.dates as mdates

    loc = mdates.AutoDateLocator(tz=UTC, minticks=4, maxticks=9)
    ax.xaxis.set_major_locator(loc)
    ax.xaxis.set_major_formatter(mdates.ConciseDateFormatter(loc, tz=UTC))
    if label:
        ax.set_xlabel("UTC")


def _dates(t: np.ndarray) -> np.ndarray:
    """Epoch seconds → numpy datetime64 (UTC) for the time axes."""
    return (np.asarray(t, float) * 1e3).astype("int64").astype("datetime64[ms]")


def _gapped(t: np.ndarray, *ys: np.ndarray, gap: float):
    """Insert a NaN row wherever consecutive times differ by more than ``gap`` (lines break there)."""
    t = np.asarray(t, float)
    if t.size < 2:
        return (t, *ys)
    cut = np.flatnonzero(np.diff(t) > gap) + 1
    return (np.insert(t, cut, np.nan), *(np.insert(np.asarray(y, float), cut, np.nan) for y in ys))


def _embed(fig, alt: str) -> str:
    """The figure as a PNG embedded in the page (base64 data URL): the report stays one file."""
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=110)
    data = base64.b64encode(buf.getvalue()).decode()
    return (
        f'<figure><img src="data:image/png;base64,{data}" alt="{_esc(alt)}">'
        f"<figcaption>{_esc(alt)}</figcaption></figure>"
    )


def _finish(fig, axes, caption: str) -> str:
    """Grid on every panel, the UTC time axis on the last, and the figure embedded with its caption."""
    for ax in axes:
        ax.grid(alpha=0.3)
    _time_axis(axes[-1])
    return _embed(fig, caption)


def _esc(x) -> str:
    return html.escape(str(x), quote=True)


# ----------------------------------------------------------------------------------------------- sections


def _fmt(x, nd: int = 1, unit: str = "") -> str:
    try:
        v = float(x)
    except (TypeError, ValueError):
        return _esc(x) if x not in (None, "") else "–"
    if not math.isfinite(v):
        return "–"
    return f"{v:.{nd}f}{unit}"


def _table(df: pd.DataFrame, columns: Sequence[tuple[str, str, int | None]], empty: str) -> str:
    if df.empty:
        return f"<p>{_esc(empty)}</p>"
    head = "".join(f"<th>{_esc(t)}</th>" for _, t, _ in columns)
    body = []
    for _, r in df.iterrows():
        cells = []
        for c, _, nd in columns:
            v = r.get(c, "")
            cells.append(
                f"<td class='num'>{_fmt(v, nd)}</td>"
                if nd is not None
                else f"<td>{_esc(v if v == v else '')}</td>"
            )
        body.append("<tr>" + "".join(cells) + "</tr>")
    return f"<table><thead><tr>{head}</tr></thead><tbody>{''.join(body)}</tbody></table>"


def _sec_summary(est, adv, periods, followed, stats, step_h, notes) -> str:
    n = len(est)
    ok = int((est["status"] == "ok").sum()) if n else 0
    hs = est["hs_m"].to_numpy(float) if n else np.zeros(0)
    conf = est["confidence"].to_numpy(float) if n else np.zeros(0)
    util = adv["utilisation"].to_numpy(float) if len(adv) else np.zeros(0)
    over_h = float(np.sum(util > 1.0)) * step_h
    changes = followed[followed["verdict"] != "no later data"] if len(followed) else followed
    nf = int((changes["verdict"] == "followed").sum()) if len(changes) else 0
    t = _time(est["window_end_utc"]) if n else None
    rows = [
        ("Period", f"{est['window_start_utc'].iloc[0]} to {est['window_end_utc'].iloc[-1]}" if n else "–"),
        ("Analysis windows", f"{n} ({ok} with a sea-state estimate)"),
        (
            "Largest estimated Hs",
            f"{_fmt(np.nanmax(hs) if np.isfinite(hs).any() else np.nan, 1)} m"
            + (f" at {est['window_end_utc'].iloc[int(np.nanargmax(hs))]}" if np.isfinite(hs).any() else ""),
        ),
        (
            "Median Hs / median confidence",
            f"{_fmt(np.nanmedian(hs) if np.isfinite(hs).any() else np.nan, 1)} m / "
            f"{_fmt(np.nanmedian(conf) if np.isfinite(conf).any() else np.nan, 2)}",
        ),
        (
            "Time over a limit at the actual heading and speed",
            f"{over_h:.1f} h in {len(periods)} period(s) (windows overlap; counted per step)",
        ),
        (
            "Advised changes of heading or speed",
            f"{len(followed)}; followed in the next window: {nf} of {len(changes)}",
        ),
    ]
    for _, s in stats.iterrows():
        if s["pairs"]:
            rows.append(
                (
                    f"Predicted ÷ measured RMS {s['channel']}",
                    f"median {_fmt(s['median_ratio'], 2)} (10–90 %: {_fmt(s['p10_ratio'], 2)}–"
                    f"{_fmt(s['p90_ratio'], 2)}) over {s['pairs']} windows",
                )
            )
    roll = roll_identified_stats(est)
    if len(roll):
        rows.append(
            (
                "Roll period measured / condition's",
                "; ".join(f"{_fmt(r.median_s, 1)} s / {_fmt(r.condition_s, 1)} s" for r in roll.itertuples())
                + f" over {int(roll['windows'].sum())} windows; "
                f"GM warnings: {int(roll['gm_warnings'].sum())}",
            )
        )
    rows.append(("Items skipped or rejected", str(max(len(notes) - 1, 0)) + " line(s), see below"))
    del t
    body = "".join(f"<tr><th scope='row'>{_esc(a)}</th><td>{_esc(b)}</td></tr>" for a, b in rows)
    return f"<table class='summary'>{body}</table>"


def _epoch(s: pd.Series) -> np.ndarray:
    return _time(s).map(lambda d: d.timestamp()).to_numpy(float)


def _sec_sea_state(est) -> str:
    if est.empty:
        return "<p>No analysis windows.</p>"
    t = _epoch(est["window_end_utc"])
    hs, tp = est["hs_m"].to_numpy(float), est["tp_s"].to_numpy(float)
    conf, wf = est["confidence"].to_numpy(float), est["wave_from_deg"].to_numpy(float)
    step = float(np.median(np.diff(t))) if t.size > 1 else 600.0
    # the estimator's confidence as a band of ±(1 − c)·Hs/2 and as the opacity of each point
    lo, hi = hs * (1 - (1 - conf) / 2), hs * (1 + (1 - conf) / 2)
    alpha = np.clip(np.nan_to_num(conf), 0.15, 1.0)
    fig, (a, b, c) = _figure([2.6, 1.6, 1.6])
    tg, hs_g, lo_g, hi_g, tp_g = _gapped(t, hs, lo, hi, tp, gap=1.5 * step)
    a.fill_between(_dates(tg), lo_g, hi_g, color=_BLUE, alpha=0.15, lw=0, label="confidence band")
    a.plot(_dates(tg), hs_g, color=_BLUE, lw=1.3, label="Hs")
    ok = np.isfinite(hs)
    a.scatter(
        _dates(t[ok]), hs[ok], s=10, color=_BLUE, alpha=alpha[ok], lw=0, label="Hs, opacity = confidence"
    )
    a.set_ylabel("Hs [m]")
    a.set_ylim(bottom=0)
    a.legend(loc="upper left", fontsize=8, frameon=False)
    b.plot(_dates(tg), tp_g, color=_ORANGE, lw=1.3)
    b.set_ylabel("Tp [s]")
    b.set_ylim(0, 1.15 * float(np.nanmax(np.r_[tp, 5.0])))
    ok = np.isfinite(wf)
    c.scatter(_dates(t[ok]), wf[ok], s=26, color=_PURPLE, alpha=alpha[ok], lw=0)
    c.set_ylim(0, 360)
    c.set_yticks([0, 90, 180, 270, 360], ["0°", "90°", "180°", "270°", "360°"])
    c.set_ylabel("waves from, true")
    return _finish(
        fig,
        (a, b, c),
        "Estimated significant wave height (band and point opacity: the estimator's confidence; fainter = "
        "less sure), peak period and the direction the waves come from",
    )


def _advised(ax, t, y, label: str) -> None:
    """The advised values as diamonds (the same mark on every panel)."""
    ax.scatter(
        _dates(t), y, s=28, marker="D", color=_ADVISED, edgecolor=_BLACK, lw=0.6, label=label, zorder=4
    )


def _sec_envelope(est, adv, env) -> str:
    if adv.empty:
        return "<p>No analysis windows.</p>"
    from matplotlib.patches import Patch

    t = _epoch(adv["window_end_utc"])
    step = float(np.median(np.diff(t))) if t.size > 1 else 600.0
    cmap, norm = _colormap()
    fig, (a, b, c) = _figure([3.4, 1.9, 1.5])
    heads = [col for col in env.columns if col.startswith("util_")] if env is not None else []
    chg = adv["status"].isin(["change", "none_acceptable"]).to_numpy()
    if heads:
        hdeg = np.array([float(col.split("_")[1]) for col in heads])
        order = np.argsort(hdeg)
        hdeg = hdeg[order]
        u = env[heads].to_numpy(float)[:, order].T  # (headings, windows)
        te = _epoch(env["window_end_utc"])
        dh = float(np.median(np.diff(hdeg))) if hdeg.size > 1 else 5.0
        # cell edges: each window drawn over its step, ending at its end time; headings centred
        xe = _dates(np.r_[te - step, te[-1]] if te.size else te)
        ye = np.r_[hdeg - dh / 2, hdeg[-1] + dh / 2]
        mesh = a.pcolormesh(xe, ye, np.ma.masked_invalid(u), cmap=cmap, norm=norm, shading="flat")
        over = np.where(np.isfinite(u), (u > 1.0).astype(float), 0.0)
        if over.any():
            a.pcolor(
                xe,
                ye,
                np.ma.masked_equal(over, 0.0),
                hatch="////",
                facecolor="none",
                edgecolor="#111111",
                lw=0.0,
                alpha=0.55,
            )
        # the scale above the chart, so that the three panels keep one time axis of one width
        cb = fig.colorbar(mesh, ax=a, location="top", aspect=60, pad=0.02)
        cb.set_label("utilisation of each heading at the speed made (1 = at a limit; hatched = over a limit)")
        cb.ax.axvline(1.0, color=_BLACK, lw=1.2)
    a.scatter(
        _dates(t),
        adv["heading_deg"].to_numpy(float),
        s=30,
        color="white",
        edgecolor=_BLACK,
        lw=1.0,
        label="heading steered",
        zorder=3,
    )
    _advised(
        a, t[chg], adv["advised_heading_deg"].to_numpy(float)[chg], "heading advised (when a change was)"
    )
    a.set_ylim(0, 360)
    a.set_yticks([0, 90, 180, 270, 360], ["0°", "90°", "180°", "270°", "360°"])
    a.set_ylabel("heading, true")
    handles, labels = a.get_legend_handles_labels()
    handles.append(Patch(facecolor="white", edgecolor=_BLACK, hatch="////", label="over a limit (hatched)"))
    a.legend(handles=handles, loc="upper left", fontsize=8, framealpha=0.85, ncol=3)
    stw = adv["stw_kn"].to_numpy(float)
    tg, stw_g, safe_g = _gapped(t, stw, adv["max_safe_stw_kn"].to_numpy(float), gap=1.5 * step)
    b.plot(
        _dates(tg),
        safe_g,
        color="#2b6c9e",
        ls="--",
        lw=1.3,
        label="highest speed inside the limits at the heading steered",
    )
    b.plot(_dates(tg), stw_g, color=_BLACK, lw=1.3, label="speed through water")
    _advised(b, t[chg], adv["advised_stw_kn"].to_numpy(float)[chg], "speed advised")
    b.set_ylabel("speed [kn]")
    b.set_ylim(0, 1.2 * np.nanmax(np.r_[stw, adv["advised_stw_kn"].to_numpy(float), safe_g, 5.0]))
    b.legend(loc="lower left", bbox_to_anchor=(0.0, 1.0), fontsize=8, frameon=False, ncol=3)
    tg, u_g = _gapped(t, adv["utilisation"].to_numpy(float), gap=1.5 * step)
    c.axhline(1.0, color=_BLACK, ls="--", lw=1.0, label="limit (utilisation 1)")
    c.plot(_dates(tg), u_g, color=_BLUE, lw=1.3, label="utilisation at the actual heading and speed")
    c.set_ylabel("utilisation")
    c.set_ylim(0, max(1.2, float(np.nanmax(u_g)) * 1.1 if np.isfinite(u_g).any() else 1.2))
    c.legend(loc="lower left", bbox_to_anchor=(0.0, 1.0), fontsize=8, frameon=False, ncol=2)
    return _finish(
        fig,
        (a, b, c),
        "Top: utilisation of every heading at the speed made (pale = far inside the limits, dark = near "
        "them, hatched = over a limit), with the heading steered and advised. Middle: speed made against "
        "the highest speed inside the limits. Bottom: utilisation at the actual heading and speed.",
    )


def _sec_motions(est, stats) -> str:
    if est.empty:
        return "<p>No analysis windows.</p>"
    t = _epoch(est["window_end_utc"])
    step = float(np.median(np.diff(t))) if t.size > 1 else 600.0
    fig, axes = _figure([1.5, 1.5, 1.5])
    for ax, (ch, unit, lab) in zip(
        axes,
        (("roll", "deg", "roll [deg]"), ("pitch", "deg", "pitch [deg]"), ("heave", "m", "heave [m]")),
        strict=True,
    ):
        m = est.get(f"{ch}_rms_{unit}")
        p = est.get(f"predicted_{ch}_rms_{unit}")
        m = m.to_numpy(float) if m is not None else np.full(t.size, np.nan)
        p = p.to_numpy(float) if p is not None else np.full(t.size, np.nan)
        tg, m_g, p_g = _gapped(t, m, p, gap=1.5 * step)
        ax.plot(_dates(tg), m_g, color=_BLACK, lw=1.3, label="measured RMS in the window")
        ax.plot(
            _dates(tg),
            p_g,
            color=_ORANGE,
            lw=1.3,
            ls="--",
            label="predicted from the previous window's estimate through the RAOs",
        )
        ax.set_ylabel(f"RMS {lab}")
        ax.set_ylim(0, 1.15 * float(np.nanmax(np.r_[m, p, 1e-3])))
    axes[0].legend(loc="lower left", bbox_to_anchor=(0.0, 1.0), fontsize=8, frameon=False, ncol=2)
    parts = [_finish(fig, axes, "Measured and predicted RMS roll, pitch and heave at the motion sensor")]
    parts.append(
        _table(
            stats,
            [
                ("channel", "motion", None),
                ("pairs", "windows", 0),
                ("median_ratio", "median predicted ÷ measured", 2),
                ("p10_ratio", "10 %", 2),
                ("p90_ratio", "90 %", 2),
                ("correlation", "correlation", 2),
            ],
            "No window had both a prediction and a measurement.",
        )
    )
    parts.append(
        "<h3>Roll period identified from the measured roll</h3><p>The natural roll period seen in the "
        "measured roll (where the roll was dominated by its resonance) against the loading condition's; a GM "
        "warning is counted when the GM the period implies (IMO IS Code 2008 roll-period formula) differs "
        f"from the condition's by more than {100 * GM_WARNING:.0f} %. Repeated warnings: check the loading "
        "computer and the condition entered.</p>"
    )
    parts.append(
        _table(
            roll_identified_stats(est),
            [
                ("condition_s", "condition [s]", 1),
                ("windows", "windows identified", 0),
                ("median_s", "measured, median [s]", 1),
                ("p10_s", "10 % [s]", 1),
                ("p90_s", "90 % [s]", 1),
                ("median_damping", "damping ratio, median", 3),
                ("median_gm_m", "implied GM, median [m]", 2),
                ("gm_warnings", "GM warnings", 0),
            ],
            "No window allowed the roll period to be identified (roll mostly wave-driven).",
        )
    )
    return "".join(parts)


_CSS = """
body{font-family:system-ui,-apple-system,"Segoe UI",Roboto,sans-serif;margin:0 auto;max-width:960px;
padding:16px;
color:#1b1b1b;background:#fff;line-height:1.45}
h1{font-size:1.5rem;margin:.2rem 0}h2{font-size:1.2rem;margin-top:2rem;border-bottom:1px solid #bbb}
table{border-collapse:collapse;margin:.5rem 0;font-size:.9rem}td,th{border:1px solid #ccc;padding:3px 6px;
vertical-align:top;text-align:left}td.num{text-align:right;font-variant-numeric:tabular-nums}
.summary th{background:#f4f4f4;font-weight:600}
.caution{border:2px solid #444;padding:8px 12px;background:#f6f6f2}
figure{margin:.6rem 0}figure img{width:100%;height:auto}figcaption{font-size:.85rem;color:#333}
nav ol{columns:2;font-size:.9rem}pre{white-space:pre-wrap;font-size:.8rem;background:#f7f7f7;padding:6px}
@media print{nav{display:none}h2{break-before:auto}}
"""


def _read(path: Path) -> pd.DataFrame | None:
    if not path.is_file():
        return None
    return pd.read_csv(path, keep_default_na=True, dtype={"window_end_utc": str, "window_start_utc": str})


def write_report(out_dir, *, title: str | None = None, notes: Sequence[str] | None = None, path=None) -> Path:
    """Write ``report.html`` from the files replay wrote to ``out_dir``.

    Parameters
    ----------
    out_dir : path
        Directory holding ``estimates.csv`` and ``advice.csv`` (and ``envelope.csv``, ``skipped.txt``).
    title : str, optional
        Page title.
    notes : sequence of str, optional
        Lines for the "What could not be replayed" section (default: ``skipped.txt``).
    path : path, optional
        Where to write (default ``out_dir/report.html``).

    Returns
    -------
    Path
        The report file.

    Raises
    ------
    FileNotFoundError
        When ``estimates.csv`` or ``advice.csv`` is missing.
    """
    out = Path(out_dir)
    est, adv = _read(out / "estimates.csv"), _read(out / "advice.csv")
    if est is None or adv is None:
        raise FileNotFoundError(
            f"{out}: estimates.csv and advice.csv are needed for the report (run replay first)"
        )
    env = _read(out / "envelope.csv")
    if notes is None:
        sk = out / "skipped.txt"
        notes = sk.read_text(encoding="utf-8").splitlines() if sk.is_file() else []
    for df in (est, adv):
        for c in ("reasons", "explanation", "limiting_criterion", "status", "zones_now"):
            if c in df:
                df[c] = df[c].fillna("")
    t_end = _time(est["window_end_utc"]) if len(est) else pd.Series(dtype="datetime64[ns, UTC]")
    step_h = (
        float(np.median(np.diff(t_end.map(lambda d: d.timestamp()).to_numpy(float)))) / 3600
        if len(est) > 1
        else 1 / 6
    )
    periods = over_limit_periods(est, adv)
    followed = advice_followed(est, adv)
    stats = prediction_stats(est)
    title = title or "Voyage replay"
    sec = dict(SECTIONS)
    body = [
        f"<h1>{_esc(title)}</h1>",
        f"<p class='caution'><strong>Read this first.</strong> {_esc(CAUTION)}</p>",
        "<nav><ol>" + "".join(f"<li><a href='#{i}'>{_esc(t)}</a></li>" for i, t in SECTIONS) + "</ol></nav>",
        f"<section id='summary'><h2>{sec['summary']}</h2>"
        + _sec_summary(est, adv, periods, followed, stats, step_h, notes)
        + "</section>",
        f"<section id='sea-state'><h2>{sec['sea-state']}</h2><p>The sea state estimated from the ship's own "
        "motions (wave-buoy analogy), one point per analysis window.</p>"
        + _sec_sea_state(est)
        + "</section>",
        f"<section id='envelope'><h2>{sec['envelope']}</h2><p>For every window: how close each heading would "
        "have taken the ship to its limits at the speed it was making "
        "(conservative utilisation: upper Hs and "
        "worst direction), the heading and speed it kept, and the advice.</p>"
        + _sec_envelope(est, adv, env)
        + "</section>",
        f"<section id='over-limit'><h2>{sec['over-limit']}</h2>"
        "<p>Periods in which the predicted motions at the "
        "actual heading and speed exceeded a limit (utilisation above 1), the limit that bound, "
        "and the advice "
        "at the start of the period.</p>"
        + _table(
            periods,
            [
                ("start_utc", "from (UTC)", None),
                ("end_utc", "to (UTC)", None),
                ("hours", "hours", 1),
                ("max_utilisation", "highest utilisation", 2),
                ("binding", "binding limit", None),
                ("advised_heading_deg", "advised heading [°]", 0),
                ("advised_stw_kn", "advised speed [kn]", 1),
                ("advice", "advice", None),
            ],
            "No window was over a limit at the actual heading and speed.",
        )
        + "</section>",
        f"<section id='followed'><h2>{sec['followed']}</h2>"
        "<p>Each advised change, compared with the heading and "
        f"speed of the next window (the one starting when the advised window ended). A change counts from "
        f"{FOLLOW_HEADING_DEG:g}° or {FOLLOW_SPEED_KN:g} kn; it was followed when the ship moved "
        "at least half "
        "that towards the advice or reached it.</p>"
        + _table(
            followed,
            [
                ("window_end_utc", "advice at (UTC)", None),
                ("heading_deg", "heading [°]", 0),
                ("stw_kn", "speed [kn]", 1),
                ("advised_heading_deg", "advised [°]", 0),
                ("advised_stw_kn", "advised [kn]", 1),
                ("next_heading_deg", "next heading [°]", 0),
                ("next_stw_kn", "next speed [kn]", 1),
                ("verdict", "result", None),
            ],
            "No change of heading or speed was advised.",
        )
        + "</section>",
        f"<section id='motions'><h2>{sec['motions']}</h2><p>RMS roll, pitch and heave at the motion sensor "
        "predicted from the previous (non-overlapping) window's sea-state estimate through the loading "
        "condition's RAOs at the heading and speed of the window, against the RMS measured in it. Agreement "
        "supports the estimates and the RAOs; a steady bias points at the RAOs or the loading condition."
        "</p>" + _sec_motions(est, stats) + "</section>",
        f"<section id='skipped'><h2>{sec['skipped']}</h2>"
        + (f"<pre>{_esc(chr(10).join(notes))}</pre>" if notes else "<p>Nothing was skipped.</p>")
        + "</section>",
        f"<section id='caution'><h2>{sec['caution']}</h2><p class='caution'>{_esc(CAUTION)}</p>"
        "<p>Utilisation is the predicted motion statistic divided by its limit (1 = at the limit). Times are "
        "UTC; headings and wave directions are true, waves given as the direction they come from."
        "</p></section>",
    ]
    doc = (
        "<!DOCTYPE html><html lang='en'><head><meta charset='utf-8'>"
        f"<meta name='viewport' content='width=device-width, initial-scale=1'><title>{_esc(title)}</title>"
        f"<style>{_CSS}</style></head><body>{''.join(body)}</body></html>\n"
    )
    target = Path(path) if path is not None else out / "report.html"
    return write_text_atomic(target, doc)  # the whole report or none (no empty file on a full disk)
