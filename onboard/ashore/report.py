"""The replay report: one self-contained HTML file a superintendent can read.

:func:`write_report` reads what ``hwadvice replay`` wrote to its output directory (``estimates.csv``,
``advice.csv``, ``envelope.csv``, ``skipped.txt``) and writes ``report.html``: no scripts, no external
files, every figure drawn here as inline SVG (the heading raster as a small PNG embedded in the SVG,
encoded with :mod:`zlib`). Sections (ids in brackets):

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

The colour ramp of utilisation runs from pale to dark through one hue family (lightness falling
monotonically, so it reads in grey print and for colour-blind readers) and turns to a separate
dark red-brown above 1 (over the limit); the limit itself is also drawn as a line where it applies.

Advisory only: the master decides. Replayed advice does not replace the ship's approved stability
information, loading computer, cargo securing manual or seamanship; local regulations and licensed
practice come first.
"""

from __future__ import annotations

import base64
import html
import math
import struct
import zlib
from collections.abc import Sequence
from datetime import UTC, datetime
from pathlib import Path

import numpy as np
import pandas as pd

from advisor.advice import ADVISORY_NOTICE
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

_RAMP = np.array(
    [  # utilisation 0 → 1: pale to dark blue-green, lightness falling (project choice)
        [0.0, 247, 251, 239],
        [0.25, 204, 235, 197],
        [0.5, 123, 204, 196],
        [0.75, 43, 140, 190],
        [1.0, 8, 64, 129],
    ]
)
_OVER = (122, 32, 22)  # above 1: dark red-brown, a different hue
_NODATA = (235, 235, 235)


def utilisation_rgb(u: np.ndarray) -> np.ndarray:
    """RGB (…, 3) uint8 of utilisation values (NaN grey, > 1 red-brown)."""
    u = np.asarray(u, float)
    out = np.empty(u.shape + (3,), dtype=np.uint8)
    c = np.clip(np.nan_to_num(u, nan=0.0), 0.0, 1.0)
    for k in range(3):
        out[..., k] = np.round(np.interp(c, _RAMP[:, 0], _RAMP[:, k + 1])).astype(np.uint8)
    out[u > 1.0] = _OVER
    out[~np.isfinite(u)] = _NODATA
    return out


def png_rgb(img: np.ndarray) -> bytes:
    """Encode an (H, W, 3) uint8 image as PNG (ISO/IEC 15948, colour type 2, filter 0)."""
    h, w, _ = img.shape
    raw = b"".join(b"\x00" + img[r].tobytes() for r in range(h))

    def chunk(kind: bytes, data: bytes) -> bytes:
        return (
            struct.pack(">I", len(data))
            + kind
            + data
            + struct.pack(">I", zlib.crc32(kind + data) & 0xFFFFFFFF)
        )

    return (
        b"\x89PNG\r\n\x1a\n"
        + chunk(b"IHDR", struct.pack(">IIBBBBB", w, h, 8, 2, 0, 0, 0))
        + chunk(b"IDAT", zlib.compress(raw, 9))
        + chunk(b"IEND", b"")
    )


def _esc(x) -> str:
    return html.escape(str(x), quote=True)


class _Axes:
    """A plot area mapping data to SVG pixels; collects SVG elements."""

    def __init__(
        self,
        width: int,
        height: int,
        x0: float,
        x1: float,
        y0: float,
        y1: float,
        *,
        left: int = 64,
        right: int = 16,
        top: int = 14,
        bottom: int = 34,
    ):
        self.w, self.h = width, height
        self.l, self.r, self.t, self.b = left, right, top, bottom
        self.x0, self.x1 = x0, (x1 if x1 > x0 else x0 + 1.0)
        self.y0, self.y1 = y0, (y1 if y1 > y0 else y0 + 1.0)
        self.parts: list[str] = []

    def px(self, x):
        return self.l + (np.asarray(x, float) - self.x0) / (self.x1 - self.x0) * (self.w - self.l - self.r)

    def py(self, y):
        return (
            self.h
            - self.b
            - (np.asarray(y, float) - self.y0) / (self.y1 - self.y0) * (self.h - self.t - self.b)
        )

    def line(
        self,
        x,
        y,
        *,
        color: str,
        width: float = 1.5,
        dash: str | None = None,
        gap: float | None = None,
        label: str = "",
    ) -> None:
        """Polyline broken at NaN and where consecutive x differ by more than ``gap``."""
        x, y = np.asarray(x, float), np.asarray(y, float)
        ok = np.isfinite(x) & np.isfinite(y)
        brk = ~ok
        if gap is not None and x.size > 1:
            brk[1:] |= np.diff(x) > gap
        seg: list[str] = []
        segs: list[list[str]] = []
        for i in range(x.size):
            if brk[i] and seg:
                segs.append(seg)
                seg = []
            if ok[i]:
                seg.append(f"{self.px(x[i]):.1f},{self.py(y[i]):.1f}")
        if seg:
            segs.append(seg)
        d = f' stroke-dasharray="{dash}"' if dash else ""
        t = f"<title>{_esc(label)}</title>" if label else ""
        for s in segs:
            if len(s) == 1:
                cx, cy = s[0].split(",")
                self.parts.append(f'<circle cx="{cx}" cy="{cy}" r="1.5" fill="{color}">{t}</circle>')
            else:
                self.parts.append(
                    f'<polyline fill="none" stroke="{color}" stroke-width="{width}"{d} '
                    f'points="{" ".join(s)}">{t}</polyline>'
                )

    def points(
        self,
        x,
        y,
        *,
        color: str,
        r: float = 2.5,
        opacity=None,
        shape: str = "circle",
        label: str = "",
        stroke: str | None = None,
    ) -> None:
        x, y = np.asarray(x, float), np.asarray(y, float)
        op = (
            np.ones(x.size)
            if opacity is None
            else np.clip(np.nan_to_num(np.asarray(opacity, float)), 0.15, 1.0)
        )
        t = f"<title>{_esc(label)}</title>" if label else ""
        st = f' stroke="{stroke}" stroke-width="1"' if stroke else ""
        for xi, yi, oi in zip(x, y, op, strict=True):
            if not (np.isfinite(xi) and np.isfinite(yi)):
                continue
            px, py = self.px(xi), self.py(yi)
            if shape == "diamond":
                self.parts.append(
                    f'<path d="M{px:.1f},{py - r:.1f} L{px + r:.1f},{py:.1f} L{px:.1f},{py + r:.1f} '
                    f'L{px - r:.1f},{py:.1f} Z" fill="{color}" fill-opacity="{oi:.2f}"{st}>{t}</path>'
                )
            else:
                self.parts.append(
                    f'<circle cx="{px:.1f}" cy="{py:.1f}" r="{r}" fill="{color}" '
                    f'fill-opacity="{oi:.2f}"{st}>{t}</circle>'
                )

    def image(self, png: bytes) -> None:
        x, y = self.l, self.t
        w, h = self.w - self.l - self.r, self.h - self.t - self.b
        data = base64.b64encode(png).decode()
        self.parts.append(
            f'<image x="{x}" y="{y}" width="{w}" height="{h}" preserveAspectRatio="none" '
            f'style="image-rendering:pixelated" href="data:image/png;base64,{data}"/>'
        )

    def hline(self, y: float, *, color: str, dash: str = "5 3", label: str = "") -> None:
        py = self.py(y)
        self.parts.append(
            f'<line x1="{self.l}" x2="{self.w - self.r}" y1="{py:.1f}" y2="{py:.1f}" '
            f'stroke="{color}" stroke-dasharray="{dash}"/>'
        )
        if label:
            self.parts.append(
                f'<text x="{self.w - self.r - 4}" y="{py - 4:.1f}" text-anchor="end" '
                f'class="small" fill="{color}">{_esc(label)}</text>'
            )

    def frame(self, *, xticks, yticks, ylabel: str, xlabel: str = "") -> None:
        axes = [
            f'<rect x="{self.l}" y="{self.t}" width="{self.w - self.l - self.r}" '
            f'height="{self.h - self.t - self.b}" fill="none" stroke="#555"/>'
        ]
        for v, txt in xticks:
            px = self.px(v)
            axes.append(
                f'<line x1="{px:.1f}" x2="{px:.1f}" y1="{self.h - self.b}" y2="{self.h - self.b + 4}" '
                f'stroke="#555"/><text x="{px:.1f}" y="{self.h - self.b + 16}" text-anchor="middle" '
                f'class="small">{_esc(txt)}</text>'
            )
        for v, txt in yticks:
            py = self.py(v)
            axes.append(
                f'<line x1="{self.l - 4}" x2="{self.l}" y1="{py:.1f}" y2="{py:.1f}" stroke="#555"/>'
                f'<text x="{self.l - 6}" y="{py + 4:.1f}" text-anchor="end" class="small">{_esc(txt)}</text>'
            )
        axes.append(
            f'<text x="14" y="{(self.t + self.h - self.b) / 2:.0f}" text-anchor="middle" class="small" '
            f'transform="rotate(-90 14 {(self.t + self.h - self.b) / 2:.0f})">{_esc(ylabel)}</text>'
        )
        if xlabel:
            axes.append(
                f'<text x="{(self.l + self.w - self.r) / 2:.0f}" y="{self.h - 2}" text-anchor="middle" '
                f'class="small">{_esc(xlabel)}</text>'
            )
        self.parts.extend(axes)

    def svg(self, title: str) -> str:
        return (
            f'<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 {self.w} {self.h}" width="100%" '
            f'role="img" aria-label="{_esc(title)}"><title>{_esc(title)}</title>{"".join(self.parts)}</svg>'
        )


def _nice_step(span: float, n: int = 6) -> float:
    raw = span / max(n, 1)
    mag = 10 ** math.floor(math.log10(raw)) if raw > 0 else 1.0
    for m in (1, 2, 2.5, 5, 10):
        if m * mag >= raw:
            return m * mag
    return 10 * mag


def _yticks(lo: float, hi: float, fmt: str = "{:g}") -> list[tuple[float, str]]:
    step = _nice_step(hi - lo, 5)
    v = math.ceil(lo / step) * step
    out = []
    while v <= hi + 1e-9:
        out.append((v, fmt.format(round(v, 6))))
        v += step
    return out


def _time_ticks(t0: float, t1: float) -> list[tuple[float, str]]:
    """Ticks on a time axis in epoch seconds: whole hours or days, labelled in UTC."""
    span = max(t1 - t0, 1.0)
    for step in (600, 1800, 3600, 3 * 3600, 6 * 3600, 12 * 3600, 86400, 2 * 86400, 7 * 86400):
        if span / step <= 8:
            break
    v = math.ceil(t0 / step) * step
    out = []
    while v <= t1:
        d = datetime.fromtimestamp(v, tz=UTC)
        label = d.strftime("%d %b %H:%M") if step < 86400 else d.strftime("%d %b")
        out.append((v, label))
        v += step
    return out


def _legend(items: Sequence[tuple[str, str]]) -> str:
    spans = "".join(
        f'<span class="key"><span class="sw" style="background:{c}"></span>{_esc(t)}</span>' for c, t in items
    )
    return f'<p class="legend">{spans}</p>'


# ----------------------------------------------------------------------------------------------- sections

_BLUE, _ORANGE, _GREY, _BLACK, _PURPLE = "#1f5a99", "#c2650a", "#888888", "#222222", "#6a3d9a"


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
    rows.append(("Items skipped or rejected", str(max(len(notes) - 1, 0)) + " line(s), see below"))
    del t
    body = "".join(f"<tr><th scope='row'>{_esc(a)}</th><td>{_esc(b)}</td></tr>" for a, b in rows)
    return f"<table class='summary'>{body}</table>"


def _sec_sea_state(est) -> str:
    if est.empty:
        return "<p>No analysis windows.</p>"
    t = _time(est["window_end_utc"]).map(lambda d: d.timestamp()).to_numpy(float)
    hs = est["hs_m"].to_numpy(float)
    tp = est["tp_s"].to_numpy(float)
    conf = est["confidence"].to_numpy(float)
    wf = est["wave_from_deg"].to_numpy(float)
    step = float(np.median(np.diff(t))) if t.size > 1 else 600.0
    gap = 1.5 * step
    t0, t1 = float(t.min()) - step / 2, float(t.max()) + step / 2
    ticks = _time_ticks(t0, t1)
    # the estimator's confidence as the opacity of each point, and as a faint band of ±(1 − c)·Hs/2
    lo, hi = hs * (1 - (1 - conf) / 2), hs * (1 + (1 - conf) / 2)
    top = np.r_[hs, hi]
    ymax = max(float(np.nanmax(top)) * 1.1 if np.isfinite(top).any() else 1.0, 1.0)
    a = _Axes(900, 230, t0, t1, 0.0, ymax)
    ok = np.isfinite(lo) & np.isfinite(hi)
    if ok.any():
        for i in np.flatnonzero(ok):
            x0, x1 = a.px(t[i] - step / 2), a.px(t[i] + step / 2)
            a.parts.append(
                f'<rect x="{x0:.1f}" y="{a.py(hi[i]):.1f}" width="{max(x1 - x0, 0.5):.1f}" '
                f'height="{max(a.py(lo[i]) - a.py(hi[i]), 0.5):.1f}" fill="{_BLUE}" fill-opacity="0.12"/>'
            )
    a.line(t, hs, color=_BLUE, gap=gap, label="Hs [m]")
    a.points(t, hs, color=_BLUE, opacity=conf, r=2.2, label="Hs, opacity = confidence")
    a.frame(xticks=ticks, yticks=_yticks(0, ymax, "{:g}"), ylabel="Hs [m]", xlabel="UTC")
    b = _Axes(900, 170, t0, t1, 0.0, max(float(np.nanmax(tp)) * 1.1 if np.isfinite(tp).any() else 20.0, 5.0))
    b.line(t, tp, color=_ORANGE, gap=gap, label="Tp [s]")
    b.frame(xticks=ticks, yticks=_yticks(0, b.y1), ylabel="Tp [s]")
    c = _Axes(900, 170, t0, t1, 0.0, 360.0)
    c.points(t, wf, color=_PURPLE, opacity=conf, r=3.0, label="waves from [deg true]")
    c.frame(xticks=ticks, yticks=[(v, f"{v:g}°") for v in (0, 90, 180, 270, 360)], ylabel="waves from")
    return (
        _legend(
            [
                (
                    _BLUE,
                    "significant wave height Hs (band and point opacity: the estimator's confidence; "
                    "fainter = less sure)",
                ),
                (_ORANGE, "peak period Tp"),
                (_PURPLE, "direction the waves come from, true"),
            ]
        )
        + a.svg("Estimated significant wave height over time")
        + b.svg("Estimated peak period")
        + c.svg("Estimated mean wave direction")
    )


def _sec_envelope(est, adv, env) -> str:
    if adv.empty:
        return "<p>No analysis windows.</p>"
    t = _time(adv["window_end_utc"]).map(lambda d: d.timestamp()).to_numpy(float)
    step = float(np.median(np.diff(t))) if t.size > 1 else 600.0
    t0, t1 = float(t.min()) - step / 2, float(t.max()) + step / 2
    ticks = _time_ticks(t0, t1)
    parts = []
    heads = [c for c in env.columns if c.startswith("util_")] if env is not None else []
    a = _Axes(900, 300, t0, t1, 0.0, 360.0)
    if heads:
        hdeg = np.array([float(c.split("_")[1]) for c in heads])
        order = np.argsort(hdeg)
        u = env[heads].to_numpy(float)[:, order]  # (windows, headings)
        te = _time(env["window_end_utc"]).map(lambda d: d.timestamp()).to_numpy(float)
        ncol = int(min(600, max(1, round((t1 - t0) / step))))
        cols = np.full((hdeg.size, ncol), np.nan)
        ci = np.clip(((te - t0) / (t1 - t0) * ncol).astype(int), 0, ncol - 1)
        for k in range(ncol):  # worst (largest) utilisation of the windows in each pixel column
            sel = ci == k
            if sel.any():
                with np.errstate(all="ignore"):
                    cols[:, k] = np.nanmax(np.where(np.isfinite(u[sel]), u[sel], -np.inf), axis=0)
        cols[~np.isfinite(cols)] = np.nan
        img = utilisation_rgb(cols[::-1])  # row 0 at the top = highest heading
        a.image(png_rgb(img))
    a.points(
        t,
        adv["heading_deg"].to_numpy(float),
        color=_BLACK,
        r=3.0,
        stroke="#ffffff",
        label="heading steered [deg]",
    )
    chg = adv["status"].isin(["change", "none_acceptable"]).to_numpy()
    a.points(
        t[chg],
        adv["advised_heading_deg"].to_numpy(float)[chg],
        color="#e8a33d",
        r=5.0,
        stroke="#222222",
        shape="diamond",
        label="heading advised [deg]",
    )
    a.frame(
        xticks=ticks,
        yticks=[(v, f"{v:g}°") for v in (0, 90, 180, 270, 360)],
        ylabel="heading, true",
        xlabel="UTC",
    )
    parts.append(
        _legend(
            [
                (_BLACK, "heading steered"),
                ("#e8a33d", "heading advised (when a change was advised)"),
                (
                    "rgb(8,64,129)",
                    "background: utilisation of each heading at the speed made, "
                    "pale = far inside the limits, dark = at the limit",
                ),
                ("rgb(122,32,22)", "over a limit"),
            ]
        )
    )
    parts.append(
        a.svg("Utilisation of every heading at the speed made, with the heading steered and advised")
    )
    stw = adv["stw_kn"].to_numpy(float)
    vmax = np.nanmax(
        np.r_[stw, adv["max_safe_stw_kn"].to_numpy(float), adv["advised_stw_kn"].to_numpy(float), 5.0]
    )
    b = _Axes(900, 200, t0, t1, 0.0, float(vmax) * 1.1)
    b.line(
        t,
        adv["max_safe_stw_kn"].to_numpy(float),
        color="#2b8cbe",
        dash="5 3",
        gap=1.5 * step,
        label="highest speed inside the limits at this heading [kn]",
    )
    b.line(t, stw, color=_BLACK, gap=1.5 * step, label="speed through water [kn]")
    b.points(
        t[chg],
        adv["advised_stw_kn"].to_numpy(float)[chg],
        color="#e8a33d",
        r=3.5,
        shape="diamond",
        label="speed advised [kn]",
    )
    b.frame(xticks=ticks, yticks=_yticks(0, b.y1), ylabel="speed [kn]", xlabel="UTC")
    parts.append(
        _legend(
            [
                (_BLACK, "speed through water"),
                ("#2b8cbe", "highest speed inside the limits at the heading steered (dashed)"),
                ("#e8a33d", "speed advised"),
            ]
        )
    )
    parts.append(b.svg("Speed made against the highest speed inside the limits"))
    u = adv["utilisation"].to_numpy(float)
    c = _Axes(900, 170, t0, t1, 0.0, max(1.2, float(np.nanmax(u)) * 1.1 if np.isfinite(u).any() else 1.2))
    c.hline(1.0, color="rgb(122,32,22)", label="limit")
    c.line(t, u, color=_BLACK, gap=1.5 * step, label="utilisation at the actual heading and speed")
    c.frame(xticks=ticks, yticks=_yticks(0, c.y1, "{:g}"), ylabel="utilisation")
    parts.append(c.svg("Utilisation at the actual heading and speed"))
    return "".join(parts)


def _sec_motions(est, stats) -> str:
    if est.empty:
        return "<p>No analysis windows.</p>"
    t = _time(est["window_end_utc"]).map(lambda d: d.timestamp()).to_numpy(float)
    step = float(np.median(np.diff(t))) if t.size > 1 else 600.0
    t0, t1 = float(t.min()) - step / 2, float(t.max()) + step / 2
    parts = [
        _legend(
            [
                (_BLACK, "measured RMS in the window"),
                (_ORANGE, "predicted from the previous window's sea-state estimate through the RAOs"),
            ]
        )
    ]
    for ch, unit, lab in (
        ("roll", "deg", "roll [deg]"),
        ("pitch", "deg", "pitch [deg]"),
        ("heave", "m", "heave [m]"),
    ):
        m = est.get(f"{ch}_rms_{unit}")
        p = est.get(f"predicted_{ch}_rms_{unit}")
        m = m.to_numpy(float) if m is not None else np.full(t.size, np.nan)
        p = p.to_numpy(float) if p is not None else np.full(t.size, np.nan)
        top = np.nanmax(np.r_[m, p, 1e-3]) * 1.15
        a = _Axes(900, 150, t0, t1, 0.0, float(top))
        a.line(t, m, color=_BLACK, gap=1.5 * step, label=f"measured RMS {lab}")
        a.line(t, p, color=_ORANGE, gap=1.5 * step, dash="4 2", label=f"predicted RMS {lab}")
        a.frame(xticks=_time_ticks(t0, t1), yticks=_yticks(0, top), ylabel=f"RMS {lab}")
        parts.append(a.svg(f"Measured and predicted RMS {ch}"))
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
    return "".join(parts)


_CSS = """
body{font-family:system-ui,-apple-system,"Segoe UI",Roboto,sans-serif;margin:0 auto;max-width:960px;
padding:16px;
color:#1b1b1b;background:#fff;line-height:1.45}
h1{font-size:1.5rem;margin:.2rem 0}h2{font-size:1.2rem;margin-top:2rem;border-bottom:1px solid #bbb}
table{border-collapse:collapse;margin:.5rem 0;font-size:.9rem}td,th{border:1px solid #ccc;padding:3px 6px;
vertical-align:top;text-align:left}td.num{text-align:right;font-variant-numeric:tabular-nums}
.summary th{background:#f4f4f4;font-weight:600}
.caution{border:2px solid #7a2016;padding:8px 12px;background:#fbf3f1}
.small{font-size:11px;fill:#333}.legend{font-size:.85rem}.key{margin-right:1.2rem;white-space:nowrap}
.sw{display:inline-block;width:.9em;height:.9em;margin-right:.3em;vertical-align:-.1em;border:1px solid #666}
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
