/* The bridge page: a live polar chart of safe heading and speed, and what goes with it.
 *
 * Vanilla JavaScript and hand-written SVG, no libraries, nothing fetched from outside this server.
 *
 * Updates: POLLING, not server-sent events. Every BRIDGE_POLL_INTERVAL_MS (2 s by default) the page asks
 * GET /api/state with the last ETag in If-None-Match; an unchanged state costs a 304 with no body. Polling
 * holds a server thread only for the milliseconds of a request (an event stream pins one per open display),
 * needs no reconnection logic when the service restarts, and a 2 s delay is small against data that changes
 * every second (own ship) or every few minutes (sea state, chart, advice). The ETag ignores the ages, so
 * the page advances the ages itself from the moment of the last full answer and applies the same
 * staleness limits (stale_after_s) as the server between answers.
 *
 * Nothing moves on this page except the flashing of alerts that have not been acknowledged.
 *
 * Advisory only: the master decides.
 */
"use strict";

(function () {
  const SVGNS = "http://www.w3.org/2000/svg";
  const body = document.body;
  const cfg = {
    pollMs: Number(body.dataset.pollMs) || 2000,
    historyMs: Number(body.dataset.historyMs) || 60000,
    historyHours: Number(body.dataset.historyHours) || 6,
    lostMs: Number(body.dataset.lostMs) || 6000,
  };

  /* ------------------------------------------------------------------------------------------------
   * Colour of utilisation.
   *
   * A sequential ramp computed in OKLab (Ottosson 2020), interpolated on a straight line between two end
   * colours. Equal steps along a straight line in OKLab are equal perceived colour differences, so the
   * ramp is perceptually uniform by construction. Lightness changes monotonically along it, so the order
   * of the colours survives every kind of colour-vision deficiency and a grey-scale view; its hues stay
   * between cyan-blue and indigo, away from red (kept for alarms), orange (warnings) and yellow (cautions),
   * so no cell can be mistaken for an alert. In each palette the higher utilisation has MORE contrast
   * with the background: darker on the light day background, brighter on the black dusk and night
   * backgrounds (and dim at night). Above utilisation 1 the colour saturates and the cell is hatched.
   * ------------------------------------------------------------------------------------------------ */
  const U_TOP = 1.25; // utilisation at the end of the ramp [-]
  const RAMPS = {
    // [L, C, h°] in OKLCh at utilisation 0 and at U_TOP
    day: { lo: [0.96, 0.035, 195], hi: [0.33, 0.13, 282] },
    dusk: { lo: [0.26, 0.03, 230], hi: [0.76, 0.11, 270] },
    night: { lo: [0.15, 0.02, 230], hi: [0.43, 0.08, 270] }, // dimmer at night: the disc is the largest lit area
  };

  function oklchToLab(lch) {
    const h = (lch[2] * Math.PI) / 180;
    return [lch[0], lch[1] * Math.cos(h), lch[1] * Math.sin(h)];
  }

  function oklabToRgb(lab) {
    // Ottosson (2020), "A perceptual color space for image processing": OKLab -> linear sRGB -> sRGB.
    const [L, a, b] = lab;
    const l = (L + 0.3963377774 * a + 0.2158037573 * b) ** 3;
    const m = (L - 0.1055613458 * a - 0.0638541728 * b) ** 3;
    const s = (L - 0.0894841775 * a - 1.291485548 * b) ** 3;
    const lin = [
      4.0767416621 * l - 3.3077115913 * m + 0.2309699292 * s,
      -1.2684380046 * l + 2.6097574011 * m - 0.3413193965 * s,
      -0.0041960863 * l - 0.7034186147 * m + 1.707614701 * s,
    ];
    return lin.map((x) => {
      const c = Math.min(1, Math.max(0, x));
      const g = c <= 0.0031308 ? 12.92 * c : 1.055 * c ** (1 / 2.4) - 0.055;
      return Math.round(g * 255);
    });
  }

  function rampColour(palette, u) {
    const ramp = RAMPS[palette] || RAMPS.day;
    const t = Math.min(1, Math.max(0, u / U_TOP));
    const lo = oklchToLab(ramp.lo);
    const hi = oklchToLab(ramp.hi);
    const lab = [0, 1, 2].map((i) => lo[i] + (hi[i] - lo[i]) * t);
    const rgb = oklabToRgb(lab);
    return `rgb(${rgb[0]}, ${rgb[1]}, ${rgb[2]})`;
  }

  /* Bands give each cell a plain class name and the readout a plain word. */
  function bandOf(u, margin) {
    if (u > 1) return "over";
    if (u > margin) return "above-margin";
    if (u > 0.8 * margin) return "near-margin";
    if (u > 0.5 * margin) return "inside";
    return "ample";
  }
  const BAND_WORDS = {
    over: "OVER THE LIMIT",
    "above-margin": "above the margin",
    "near-margin": "near the margin",
    inside: "inside the margin",
    ample: "below half the margin",
  };

  const ZONES = [
    ["surf_riding", "Surf-riding / broaching", "surf-riding"],
    ["successive_waves", "Successive high waves", "high waves"],
    ["synchronous_roll", "Synchronous roll", "sync. roll"],
    ["parametric_roll", "Parametric roll", "param. roll"],
  ];

  /* ------------------------------------------------------------------------------------------------
   * Small helpers
   * ------------------------------------------------------------------------------------------------ */
  const $ = (id) => document.getElementById(id);

  function el(tag, attrs, text) {
    const node = document.createElement(tag);
    if (attrs) for (const [k, v] of Object.entries(attrs)) node.setAttribute(k, v);
    if (text !== undefined && text !== null) node.textContent = text;
    return node;
  }

  function svg(tag, attrs, text) {
    const node = document.createElementNS(SVGNS, tag);
    if (attrs) for (const [k, v] of Object.entries(attrs)) node.setAttribute(k, v);
    if (text !== undefined && text !== null) node.textContent = text;
    return node;
  }

  const isNum = (x) => typeof x === "number" && Number.isFinite(x);
  const fmtHeading = (h) => (isNum(h) ? `${String(Math.round(((h % 360) + 360) % 360) % 360).padStart(3, "0")}°` : "—");
  const fmtSpeed = (v) => (isNum(v) ? `${v.toFixed(1)} kn` : "—");
  const fmtNum = (x, d) => (isNum(x) ? x.toFixed(d) : "—");
  const fmtUtc = (iso) => (iso ? `${iso.slice(11, 16)}Z` : "—");

  function fmtAge(s) {
    if (!isNum(s)) return "";
    if (s < 90) return `${Math.round(s)} s`;
    if (s < 5400) return `${Math.round(s / 60)} min`;
    const h = Math.floor(s / 3600);
    return `${h} h ${Math.round((s - h * 3600) / 60)} min`;
  }

  /* ------------------------------------------------------------------------------------------------
   * Palettes (day / dusk / night), persisted per display.
   * ------------------------------------------------------------------------------------------------ */
  const PALETTE_KEY = "bridge.palette";
  let palette = "day";

  function setPalette(name) {
    if (!RAMPS[name]) name = "day";
    palette = name;
    body.classList.remove("palette-day", "palette-dusk", "palette-night");
    body.classList.add(`palette-${name}`);
    for (const b of document.querySelectorAll(".palette-switch button")) {
      b.setAttribute("aria-pressed", String(b.dataset.palette === name));
    }
    try {
      localStorage.setItem(PALETTE_KEY, name);
    } catch (e) {
      /* private mode: the switch still works for this page */
    }
    recolourCells();
    drawKey();
    drawTrend();
  }

  /* ------------------------------------------------------------------------------------------------
   * Polar geometry: north up, heading clockwise, speed outward.
   * ------------------------------------------------------------------------------------------------ */
  const R_OUT = 262; // radius of the outer edge of the last speed ring [SVG units]
  let geom = null; // {headEdges: [[a0, a1]...], speedEdges: [r0..rN], vmax}

  function xy(bearingDeg, r) {
    const a = (bearingDeg * Math.PI) / 180;
    return [r * Math.sin(a), -r * Math.cos(a)];
  }

  function edges(values, lowClip) {
    const n = values.length;
    const out = [];
    for (let i = 0; i <= n; i++) {
      let e;
      if (n === 1) e = i === 0 ? values[0] - 0.5 : values[0] + 0.5;
      else if (i === 0) e = values[0] - (values[1] - values[0]) / 2;
      else if (i === n) e = values[n - 1] + (values[n - 1] - values[n - 2]) / 2;
      else e = (values[i - 1] + values[i]) / 2;
      out.push(lowClip !== undefined ? Math.max(lowClip, e) : e);
    }
    return out;
  }

  function buildGeometry(polar) {
    const sEdges = edges(polar.speeds_kn, 0);
    const vmax = sEdges[sEdges.length - 1];
    const hs = polar.headings_deg;
    const step = hs.length > 1 ? 360 / hs.length : 360;
    const headEdges = hs.map((h) => [h - step / 2, h + step / 2]);
    return { headEdges, speedEdges: sEdges.map((v) => (v / vmax) * R_OUT), vmax, step };
  }

  const DEFAULT_VMAX = 22.5; // outer speed of the empty chart drawn when there is no polar [kn]
  const chartVmax = () => (geom ? geom.vmax : DEFAULT_VMAX);
  const radiusOf = (v) => (Math.min(Math.max(v, 0), chartVmax()) / chartVmax()) * R_OUT;

  function sectorPath(a0, a1, r0, r1) {
    const large = a1 - a0 > 180 ? 1 : 0;
    const [x0, y0] = xy(a0, r1);
    const [x1, y1] = xy(a1, r1);
    if (r0 <= 0.01) {
      return `M0 0L${x0.toFixed(2)} ${y0.toFixed(2)}A${r1.toFixed(2)} ${r1.toFixed(2)} 0 ${large} 1 ${x1.toFixed(2)} ${y1.toFixed(2)}Z`;
    }
    const [x2, y2] = xy(a1, r0);
    const [x3, y3] = xy(a0, r0);
    return (
      `M${x0.toFixed(2)} ${y0.toFixed(2)}A${r1.toFixed(2)} ${r1.toFixed(2)} 0 ${large} 1 ${x1.toFixed(2)} ${y1.toFixed(2)}` +
      `L${x2.toFixed(2)} ${y2.toFixed(2)}A${r0.toFixed(2)} ${r0.toFixed(2)} 0 ${large} 0 ${x3.toFixed(2)} ${y3.toFixed(2)}Z`
    );
  }

  /* ------------------------------------------------------------------------------------------------
   * Chart layers
   * ------------------------------------------------------------------------------------------------ */
  let polarSig = null;
  let cellNodes = [];

  function clear(node) {
    while (node.firstChild) node.removeChild(node.firstChild);
  }

  function drawGrid() {
    const g = $("layer-grid");
    const labels = $("layer-labels");
    clear(g);
    clear(labels);
    // Without a polar the rings and the rose are still drawn, so the empty chart still reads as a chart.
    const vmax = chartVmax();
    const ring = radiusOf;
    for (let v = 5; v < vmax; v += 5) {
      g.appendChild(svg("circle", { class: "grid-ring", cx: 0, cy: 0, r: ring(v).toFixed(2) }));
    }
    g.appendChild(svg("circle", { class: "grid-rim", cx: 0, cy: 0, r: R_OUT }));
    for (let b = 0; b < 360; b += 10) {
      const major = b % 30 === 0;
      const [x0, y0] = xy(b, R_OUT);
      const [x1, y1] = xy(b, R_OUT + (major ? 12 : 6));
      g.appendChild(svg("line", { class: major ? "tick tick-major" : "tick", x1: x0, y1: y0, x2: x1, y2: y1 }));
      if (major) {
        if (b !== 0) {
          const [xs, ys] = xy(b, 0);
          const [xe, ye] = xy(b, R_OUT);
          g.appendChild(svg("line", { class: "grid-spoke", x1: xs, y1: ys, x2: xe, y2: ye }));
        }
        const [tx, ty] = xy(b, R_OUT + 27);
        labels.appendChild(svg("text", { class: "bearing-label", x: tx.toFixed(1), y: (ty + 6).toFixed(1), "text-anchor": "middle" }, b === 0 ? "N" : String(b).padStart(3, "0")));
      }
    }
    // North spoke, drawn heavier, carries the speed labels.
    g.appendChild(svg("line", { class: "grid-spoke grid-north", x1: 0, y1: 0, x2: 0, y2: -R_OUT }));
    for (let v = 5; v < vmax; v += 5) {
      const r = ring(v);
      labels.appendChild(svg("rect", { class: "ring-label-back", x: 3, y: (-r - 17).toFixed(1), width: v < 10 ? 38 : 47, height: 17, rx: 3 }));
      labels.appendChild(svg("text", { class: "ring-label", x: 6, y: (-r - 3.5).toFixed(1) }, `${v} kn`));
    }
  }

  function drawCells(polar) {
    const g = $("layer-cells");
    clear(g);
    cellNodes = [];
    if (!polar) return;
    const margin = polar.margin;
    polar.headings_deg.forEach((h, i) => {
      const [a0, a1] = geom.headEdges[i];
      polar.speeds_kn.forEach((v, j) => {
        const u = polar.utilisation[i][j];
        const lim = polar.limiting[i][j];
        const p = svg("path", {
          class: `cell band-${bandOf(u, margin)}`,
          d: sectorPath(a0, a1, geom.speedEdges[j], geom.speedEdges[j + 1]),
          "data-i": i,
          "data-j": j,
          "data-heading-deg": h,
          "data-speed-kn": v,
          "data-utilisation": u,
          "data-limiting": (polar.criteria[lim] && polar.criteria[lim].key) || String(lim),
        });
        g.appendChild(p);
        cellNodes.push(p);
      });
    });
    recolourCells();
  }

  function recolourCells() {
    for (const p of cellNodes) {
      p.setAttribute("fill", rampColour(palette, Number(p.dataset.utilisation)));
    }
    drawSmoothFill();
  }

  /* A [heading][speed] grid extended to speed 0 and to the outer rim with the values of its first and
   * last speed (used by the smooth fill and the contour lines, so both agree at the chart's edges). */
  function extendedGrid(polar, grid) {
    const sp = polar.speeds_kn.slice();
    const rows = grid.map((r) => r.slice());
    const vmax = chartVmax();
    if (sp[0] > 0) {
      sp.unshift(0);
      rows.forEach((r) => r.unshift(r[0]));
    }
    if (sp[sp.length - 1] < vmax) {
      sp.push(vmax);
      rows.forEach((r) => r.push(r[r.length - 1]));
    }
    return { sp, rows, vmax };
  }

  /* The colour fill, smooth: every pixel of the disc takes the utilisation interpolated bilinearly
   * between cell centres (heading wraps round; the grid is extended to speed 0 and to the rim as for
   * the contour lines, so fill and lines agree), coloured on the same ramp. Drawn once per polar and
   * palette into an image under the cells; the cells stay on top, transparent, for pointing and reading. */
  function drawSmoothFill() {
    const g = $("layer-fill");
    clear(g);
    const polar = state && state.polar;
    if (!polar || !geom || polar.headings_deg.length < 2) return;
    const N = 2 * Math.ceil(R_OUT);
    const canvas = document.createElement("canvas");
    canvas.width = N;
    canvas.height = N;
    const ctx = canvas.getContext("2d");
    if (!ctx) return;
    const img = ctx.createImageData(N, N);
    const hs = polar.headings_deg;
    const nh = hs.length;
    const step = 360 / nh;
    const { sp, rows, vmax } = extendedGrid(polar, polar.utilisation);
    // The ramp in 256 steps (the colour of each step computed once).
    const LUT = [];
    for (let k = 0; k < 256; k++) {
      const m = /rgb\((\d+), (\d+), (\d+)\)/.exec(rampColour(palette, (k / 255) * U_TOP));
      LUT.push([Number(m[1]), Number(m[2]), Number(m[3])]);
    }
    const half = N / 2;
    for (let py = 0; py < N; py++) {
      for (let px = 0; px < N; px++) {
        const x = px + 0.5 - half;
        const y = py + 0.5 - half;
        const r = Math.hypot(x, y);
        if (r > R_OUT) continue;
        const v = (r / R_OUT) * vmax;
        const h = ((Math.atan2(x, -y) * 180) / Math.PI + 360) % 360;
        const fi = (((h - hs[0]) / step) % nh + nh) % nh;
        const i0 = Math.floor(fi);
        const i1 = (i0 + 1) % nh;
        const a = fi - i0;
        let j = 0;
        while (j < sp.length - 2 && v > sp[j + 1]) j++;
        const b = Math.min(1, Math.max(0, (v - sp[j]) / (sp[j + 1] - sp[j])));
        const u =
          (1 - a) * ((1 - b) * rows[i0][j] + b * rows[i0][j + 1]) + a * ((1 - b) * rows[i1][j] + b * rows[i1][j + 1]);
        const c = LUT[Math.max(0, Math.min(255, Math.round((u / U_TOP) * 255)))];
        const o = 4 * (py * N + px);
        img.data[o] = c[0];
        img.data[o + 1] = c[1];
        img.data[o + 2] = c[2];
        img.data[o + 3] = 255;
      }
    }
    ctx.putImageData(img, 0, 0);
    g.appendChild(svg("image", { href: canvas.toDataURL("image/png"), x: -half, y: -half, width: N, height: N, class: "smooth-fill" }));
  }

  /* Zone and over-limit fills (patterns) live in their own layer, shown only when the officer asks for
   * them ("Zone fill" in the key); by default the zones are outlines, so nothing covers the colours. */
  function drawOverlays(polar) {
    const g = $("layer-overlays");
    const outl = $("layer-zones");
    clear(g);
    clear(outl);
    if (!polar) return;
    const parts = { over: [] };
    for (const [key] of ZONES) parts[key] = [];
    polar.headings_deg.forEach((h, i) => {
      const [a0, a1] = geom.headEdges[i];
      polar.speeds_kn.forEach((v, j) => {
        const d = sectorPath(a0, a1, geom.speedEdges[j], geom.speedEdges[j + 1]);
        if (polar.utilisation[i][j] > 1) parts.over.push(d);
        for (const [key] of ZONES) {
          if (polar.zones && polar.zones[key] && polar.zones[key][i][j]) parts[key].push(d);
        }
      });
    });
    if (parts.over.length) g.appendChild(svg("path", { class: "overlay overlay-over", d: parts.over.join(""), fill: "url(#pat-over)" }));
    for (const [key, label, short] of ZONES) {
      if (!parts[key].length) continue;
      const p = svg("path", { class: `overlay zone zone-${key}`, d: parts[key].join(""), fill: `url(#pat-${key})`, "data-zone": key });
      p.appendChild(svg("title", null, label));
      g.appendChild(p);
      // The outline: the boundary of the zone mask, traced like a contour at 0.5 between cell centres.
      const mask = polar.zones[key].map((row) => row.map((b) => (b ? 1 : 0)));
      const lines = contourLines(polar, mask, 0.5);
      if (!lines.length) continue;
      const d = linesPath(lines);
      const zg = svg("g", { class: `zone-outline zone-outline-${key}`, "data-zone": key });
      zg.appendChild(svg("path", { class: "zone-line-casing", d }));
      zg.appendChild(svg("path", { class: "zone-line", d }));
      // One short name on the longest piece of the outline, so the line can be read without the key.
      const longest = lines.reduce((a, b) => (b.length > a.length ? b : a));
      const [hx, vx] = longest[Math.floor(longest.length / 2)];
      const [lx, ly] = xy(hx, radiusOf(vx));
      zg.appendChild(svg("text", { class: "zone-name", x: lx.toFixed(1), y: (ly + 5).toFixed(1), "text-anchor": "middle" }, short));
      zg.appendChild(svg("title", null, `${label} (screened zone, screening only)`));
      outl.appendChild(zg);
    }
  }

  /* Contour lines of a grid at a level, traced between cell centres with linear interpolation along
   * each edge (marching squares; Lorensen & Cline 1987 in two dimensions), so the line runs smoothly
   * where the interpolated value equals the level instead of along cell edges. Headings wrap round;
   * the grid is extended to speed 0 and to the outer rim with the values of its first and last speed,
   * so the line reaches the chart's edges. Returns polylines of [heading_deg, speed_kn] points. */
  function contourLines(polar, grid, level) {
    const hs = polar.headings_deg;
    const nh = hs.length;
    if (nh < 2) return [];
    const step = 360 / nh;
    const { sp, rows } = extendedGrid(polar, grid);
    const ns = sp.length;
    const val = (i, j) => rows[((i % nh) + nh) % nh][j];
    const above = (i, j) => val(i, j) > level;
    // Point on the edge between node (i, j) and its neighbour in heading (di = 1) or speed (dj = 1).
    const pts = new Map();
    function edgePoint(i, j, di, dj) {
      const key = `${((i % nh) + nh) % nh},${j},${di}`;
      if (pts.has(key)) return key;
      const u0 = val(i, j);
      const u1 = val(i + di, j + dj);
      const f = Math.min(1, Math.max(0, (level - u0) / (u1 - u0)));
      const h = hs[((i % nh) + nh) % nh] + f * step * di;
      const v = sp[j] + f * (sp[j + dj] - sp[j]) * dj;
      pts.set(key, [h, v]);
      return key;
    }
    const segs = [];
    for (let i = 0; i < nh; i++) {
      for (let j = 0; j + 1 < ns; j++) {
        // Corners: a (i, j), b (i+1, j), c (i+1, j+1), d (i, j+1).
        const a = above(i, j), b = above(i + 1, j), c = above(i + 1, j + 1), d = above(i, j + 1);
        const idx = (a ? 1 : 0) | (b ? 2 : 0) | (c ? 4 : 0) | (d ? 8 : 0);
        if (idx === 0 || idx === 15) continue;
        const eAB = () => edgePoint(i, j, 1, 0);
        const eBC = () => edgePoint(i + 1, j, 0, 1);
        const eDC = () => edgePoint(i, j + 1, 1, 0);
        const eAD = () => edgePoint(i, j, 0, 1);
        const centreAbove = (val(i, j) + val(i + 1, j) + val(i + 1, j + 1) + val(i, j + 1)) / 4 > level;
        switch (idx) {
          case 1: case 14: segs.push([eAB(), eAD()]); break;
          case 2: case 13: segs.push([eAB(), eBC()]); break;
          case 4: case 11: segs.push([eBC(), eDC()]); break;
          case 8: case 7: segs.push([eDC(), eAD()]); break;
          case 3: case 12: segs.push([eAD(), eBC()]); break;
          case 6: case 9: segs.push([eAB(), eDC()]); break;
          case 5: // a and c above: a saddle, resolved by the mean of the four corners
            if (centreAbove) { segs.push([eAB(), eBC()]); segs.push([eDC(), eAD()]); }
            else { segs.push([eAB(), eAD()]); segs.push([eBC(), eDC()]); }
            break;
          case 10:
            if (centreAbove) { segs.push([eAB(), eAD()]); segs.push([eBC(), eDC()]); }
            else { segs.push([eAB(), eBC()]); segs.push([eDC(), eAD()]); }
            break;
          default: break;
        }
      }
    }
    // Chain the segments into polylines through their shared edge points.
    const byPoint = new Map();
    segs.forEach((s, k) => {
      for (const e of s) {
        if (!byPoint.has(e)) byPoint.set(e, []);
        byPoint.get(e).push(k);
      }
    });
    const used = new Uint8Array(segs.length);
    const lines = [];
    for (let k = 0; k < segs.length; k++) {
      if (used[k]) continue;
      used[k] = 1;
      const chain = [segs[k][0], segs[k][1]];
      for (const forward of [true, false]) {
        for (;;) {
          const end = forward ? chain[chain.length - 1] : chain[0];
          const next = (byPoint.get(end) || []).find((m) => !used[m]);
          if (next === undefined) break;
          used[next] = 1;
          const other = segs[next][0] === end ? segs[next][1] : segs[next][0];
          if (forward) chain.push(other);
          else chain.unshift(other);
        }
      }
      lines.push(chain.map((e) => pts.get(e)));
    }
    return lines;
  }

  /* Corner cutting (Chaikin 1974), twice, on the drawn line only: it rounds the sub-cell zig-zags of the
   * interpolated vertices; the ends of an open line stay where they are. */
  function chaikin(pts, closed) {
    if (pts.length < 3) return pts;
    const out = closed ? [] : [pts[0]];
    const n = pts.length;
    const last = closed ? n : n - 1;
    for (let k = 0; k < last; k++) {
      const [x0, y0] = pts[k];
      const [x1, y1] = pts[(k + 1) % n];
      out.push([0.75 * x0 + 0.25 * x1, 0.75 * y0 + 0.25 * y1], [0.25 * x0 + 0.75 * x1, 0.25 * y0 + 0.75 * y1]);
    }
    if (!closed) out.push(pts[n - 1]);
    return out;
  }

  function linesPath(lines) {
    return lines
      .map((line) => {
        let pts = line.map(([h, v]) => xy(h, radiusOf(v)));
        const closed = pts.length > 3 && Math.hypot(pts[0][0] - pts[pts.length - 1][0], pts[0][1] - pts[pts.length - 1][1]) < 0.01;
        if (closed) pts = pts.slice(0, -1);
        pts = chaikin(chaikin(pts, closed), closed);
        return pts.map(([x, y], k) => `${k ? "L" : "M"}${x.toFixed(1)} ${y.toFixed(1)}`).join("") + (closed ? "Z" : "");
      })
      .join("");
  }

  function drawLimit(polar) {
    const g = $("layer-limit");
    clear(g);
    if (!polar) return;
    const U = polar.utilisation;
    const hv = (lines) => lines.map((l) => l.map(([h, v]) => `${h.toFixed(2)},${v.toFixed(3)}`).join(" ")).join(";");
    const lm = contourLines(polar, U, polar.margin);
    if (lm.length) g.appendChild(svg("path", { class: "contour-margin", d: linesPath(lm), "data-level": polar.margin, "data-hv": hv(lm) }));
    const l1 = contourLines(polar, U, 1);
    if (l1.length) {
      const d1 = linesPath(l1);
      g.appendChild(svg("path", { class: "contour-limit-casing", d: d1 }));
      g.appendChild(svg("path", { class: "contour-limit", d: d1, "data-level": 1, "data-hv": hv(l1) }));
    }
    // The attainable speed per heading (optional field from the advisor): a dash-dot line.
    const cap = polar.attainable_stw_kn;
    if (Array.isArray(cap) && cap.length === polar.headings_deg.length && cap.every(isNum)) {
      const d = polar.headings_deg.map((h, i) => {
        const [x, y] = xy(h, radiusOf(cap[i]));
        return `${i ? "L" : "M"}${x.toFixed(1)} ${y.toFixed(1)}`;
      }).join("") + "Z";
      g.appendChild(svg("path", { class: "speed-cap-casing", d }));
      g.appendChild(svg("path", { class: "speed-cap", d, "data-mark": "speed-cap" }));
    }
  }

  function arrowAtRim(bearing, cls, label, slot) {
    // An arrow outside the rim at the bearing the waves come FROM, pointing toward the centre.
    const g = svg("g", { class: `wave-arrow ${cls}`, "data-from-deg": bearing });
    const rTail = R_OUT + 46;
    const rTip = R_OUT + 4;
    const [xt, yt] = xy(bearing, rTail);
    const [xh, yh] = xy(bearing, rTip);
    const [xb, yb] = xy(bearing, rTip + 16);
    const [px, py] = xy(bearing + 90, 8);
    g.appendChild(svg("line", { class: "wave-shaft", x1: xt.toFixed(1), y1: yt.toFixed(1), x2: xb.toFixed(1), y2: yb.toFixed(1) }));
    g.appendChild(svg("polygon", {
      class: "wave-head",
      points: `${xh.toFixed(1)},${yh.toFixed(1)} ${(xb + px).toFixed(1)},${(yb + py).toFixed(1)} ${(xb - px).toFixed(1)},${(yb - py).toFixed(1)}`,
    }));
    // The label sits beside the tail, on the side away from the chart, in one or two lines.
    const sin = Math.sin((bearing * Math.PI) / 180);
    const cos = Math.cos((bearing * Math.PI) / 180);
    const [lx, ly] = xy(bearing, rTail + 6);
    const anchor = sin > 0.35 ? "start" : sin < -0.35 ? "end" : "middle";
    const y0 = cos > 0.35 ? ly - 22 : cos < -0.35 ? ly + 16 : ly - 4;
    const words = label.split(" ");
    const lines = words.length > 2 ? [words.slice(0, -2).join(" "), words.slice(-2).join(" ")] : [label];
    lines.forEach((line, k) => {
      g.appendChild(svg("text", { class: "wave-label", x: lx.toFixed(1), y: (y0 + k * 16).toFixed(1), "text-anchor": anchor }, line));
    });
    g.appendChild(svg("title", null, `${label}: waves from ${fmtHeading(bearing)}`));
    return g;
  }

  function drawMarks(st) {
    const g = $("layer-marks");
    clear(g);
    const ship = st && st.ship;
    const sea = st && st.sea_state;
    // Waves: one arrow per system (coming from); the total only when there are no systems.
    if (sea) {
      const systems = sea.systems && sea.systems.length ? sea.systems : [{ label: "total", hs_m: sea.hs_m, wave_from_deg: sea.wave_from_deg }];
      systems.forEach((s, k) => {
        const cls = s.label === "swell" ? "wave-swell" : s.label === "wind sea" ? "wave-wind" : "wave-total";
        g.appendChild(arrowAtRim(s.wave_from_deg, cls, `${s.label} ${fmtNum(s.hs_m, 1)} m`, k));
      });
    }
    if (!ship) return;
    // Intended course: a dashed radial line and a hollow notch outside the rim.
    if (isNum(ship.intended_course_deg)) {
      const c = ship.intended_course_deg;
      const [xe, ye] = xy(c, R_OUT);
      g.appendChild(svg("line", { class: "mark-course-line", x1: 0, y1: 0, x2: xe.toFixed(1), y2: ye.toFixed(1) }));
      const [xa, ya] = xy(c, R_OUT + 2);
      const [xb, yb] = xy(c - 3.2, R_OUT + 22);
      const [xc, yc] = xy(c + 3.2, R_OUT + 22);
      const notch = svg("polygon", { class: "mark-course", "data-mark": "intended-course", "data-heading-deg": c, points: `${xa.toFixed(1)},${ya.toFixed(1)} ${xb.toFixed(1)},${yb.toFixed(1)} ${xc.toFixed(1)},${yc.toFixed(1)}` });
      notch.appendChild(svg("title", null, `Intended course ${fmtHeading(c)}`));
      g.appendChild(notch);
    }
    const advice = st.advice;
    const showAdvice = adviceIsCurrent(st) && advice && isNum(advice.advised_heading_deg) && isNum(advice.advised_stw_kn);
    const own = isNum(ship.heading_deg) && isNum(ship.stw_kn) ? xy(ship.heading_deg, radiusOf(ship.stw_kn)) : null;
    // Advised heading and speed: a ring with a cross (a target), and a thin arrow from own ship to it.
    if (showAdvice) {
      const [ax, ay] = xy(advice.advised_heading_deg, radiusOf(advice.advised_stw_kn));
      const turn = turnOf(advice);
      if (own && turn && isNum(ship.heading_deg)) {
        // The turn (optional field from the advisor): an arc at the present speed from the present
        // heading round to the suggested one, the way the advisor says, with an arrowhead at its end.
        const h0 = ship.heading_deg;
        let sweep = (((advice.advised_heading_deg - h0) % 360) + 360) % 360; // clockwise degrees
        if (turn === "port") sweep -= 360;
        const r = Math.max(radiusOf(ship.stw_kn), 40);
        const n = Math.max(2, Math.ceil(Math.abs(sweep) / 4));
        let d = "";
        for (let k = 0; k <= n; k++) {
          const [x, y] = xy(h0 + (sweep * k) / n, r);
          d += `${k ? "L" : "M"}${x.toFixed(1)} ${y.toFixed(1)}`;
        }
        const hEnd = h0 + sweep;
        const [ex, ey] = xy(hEnd, r);
        const dirSign = sweep >= 0 ? 1 : -1;
        const [bx, by] = xy(hEnd - dirSign * (14 / r) * (180 / Math.PI), r);
        const nx = (bx - ex) * 0.6, ny = (by - ey) * 0.6;
        const head = `M${(bx - ny).toFixed(1)} ${(by + nx).toFixed(1)}L${ex.toFixed(1)} ${ey.toFixed(1)}L${(bx + ny).toFixed(1)} ${(by - nx).toFixed(1)}`;
        const tg = svg("g", { class: "mark-turn", "data-mark": "turn", "data-turn": turn });
        tg.appendChild(svg("path", { class: "mark-turn-casing", d: d + head }));
        tg.appendChild(svg("path", { class: "mark-turn-line", d: d + head }));
        tg.appendChild(svg("title", null, `Turn to ${turn}`));
        g.appendChild(tg);
      } else if (own && Math.hypot(ax - own[0], ay - own[1]) > 16) {
        g.appendChild(svg("line", { class: "mark-advice-path", x1: own[0].toFixed(1), y1: own[1].toFixed(1), x2: ax.toFixed(1), y2: ay.toFixed(1) }));
      }
      const t = svg("g", { class: "mark-advice", "data-mark": "advised", "data-heading-deg": advice.advised_heading_deg, "data-speed-kn": advice.advised_stw_kn, transform: `translate(${ax.toFixed(1)} ${ay.toFixed(1)})` });
      t.appendChild(svg("circle", { class: "mark-advice-casing", r: 14 }));
      t.appendChild(svg("path", { class: "mark-advice-casing", d: "M-21 0H-7M7 0H21M0 -21V-7M0 7V21" }));
      t.appendChild(svg("circle", { class: "mark-advice-ring", r: 14 }));
      t.appendChild(svg("path", { class: "mark-advice-cross", d: "M-21 0H-7M7 0H21M0 -21V-7M0 7V21" }));
      t.appendChild(svg("title", null, `Suggested ${fmtHeading(advice.advised_heading_deg)} ${fmtSpeed(advice.advised_stw_kn)} STW`));
      g.appendChild(t);
    }
    // Own ship: a hull outline pointing along the present heading, at the present speed.
    if (own) {
      const s = svg("g", { class: "mark-own", "data-mark": "own-ship", "data-heading-deg": ship.heading_deg, "data-speed-kn": ship.stw_kn, transform: `translate(${own[0].toFixed(1)} ${own[1].toFixed(1)}) rotate(${ship.heading_deg})` });
      s.appendChild(svg("path", { class: "mark-own-hull", d: "M0 -24 C8 -13 9 -3 9 5 L8 16 L-8 16 L-9 5 C-9 -3 -8 -13 0 -24 Z" }));
      s.appendChild(svg("title", null, `Own ship ${fmtHeading(ship.heading_deg)} ${fmtSpeed(ship.stw_kn)} STW`));
      g.appendChild(s);
    }
  }

  /* ------------------------------------------------------------------------------------------------
   * Readout of one cell (a fixed panel, never a pop-up)
   * ------------------------------------------------------------------------------------------------ */
  let pickedCell = null;

  function showCell(p) {
    if (!state || !state.polar || !p) return;
    const polar = state.polar;
    const i = Number(p.dataset.i);
    const j = Number(p.dataset.j);
    const u = polar.utilisation[i][j];
    const un = polar.utilisation_nominal ? polar.utilisation_nominal[i][j] : null;
    const crit = polar.criteria[polar.limiting[i][j]];
    const zones = ZONES.filter(([k]) => polar.zones && polar.zones[k] && polar.zones[k][i][j]).map(([, label]) => label);
    const box = $("readout");
    clear(box);
    box.dataset.headingDeg = p.dataset.headingDeg;
    box.dataset.speedKn = p.dataset.speedKn;
    const line1 = el("div", { class: "readout-main" });
    line1.appendChild(el("span", { class: "readout-num" }, fmtHeading(polar.headings_deg[i])));
    line1.appendChild(el("span", { class: "readout-num" }, `${fmtSpeed(polar.speeds_kn[j])} STW`));
    line1.appendChild(el("span", { class: "readout-num" }, `utilisation ${fmtNum(u, 2)}`));
    line1.appendChild(el("span", { class: "readout-band" }, BAND_WORDS[bandOf(u, polar.margin)]));
    box.appendChild(line1);
    const parts = [];
    if (crit) parts.push(`binding limit: ${crit.label} (limit ${crit.limit} ${crit.unit})`);
    if (isNum(un)) parts.push(`nominal estimate ${fmtNum(un, 2)}`);
    parts.push(zones.length ? `screened zone (screening only): ${zones.join(", ")}` : "no screened zone (screening only)");
    box.appendChild(el("div", { class: "readout-detail" }, parts.join(" · ")));
    for (const n of cellNodes) n.classList.remove("picked");
    p.classList.add("picked");
    pickedCell = [i, j];
  }

  function wireChartPointer() {
    const layer = $("layer-cells");
    const pick = (ev) => {
      const t = ev.target;
      if (t && t.classList && t.classList.contains("cell")) showCell(t);
    };
    layer.addEventListener("pointerover", pick);
    layer.addEventListener("pointerdown", pick);
    layer.addEventListener("click", pick);
  }

  /* ------------------------------------------------------------------------------------------------
   * Key to the chart
   * ------------------------------------------------------------------------------------------------ */
  function drawKey() {
    const box = $("key");
    clear(box);
    const margin = state && state.polar ? state.polar.margin : 0.9;
    const w = 300;
    const s = svg("svg", { class: "key-bar", viewBox: `0 0 ${w + 34} 50`, role: "img", "aria-label": "Utilisation colour scale" });
    const steps = 50;
    for (let k = 0; k < steps; k++) {
      const u = (k / steps) * U_TOP;
      s.appendChild(svg("rect", { x: 10 + (k * w) / steps, y: 16, width: w / steps + 0.6, height: 16, fill: rampColour(palette, u + U_TOP / steps / 2) }));
    }
    const x1 = 10 + (w * 1) / U_TOP;
    if (zoneFill) s.appendChild(svg("rect", { x: x1, y: 16, width: 10 + w - x1, height: 16, fill: "url(#pat-over)", class: "key-over" }));
    s.appendChild(svg("rect", { class: "key-frame", x: 10, y: 16, width: w, height: 16 }));
    for (const u of [0, 0.25, 0.5, 0.75, margin, 1, U_TOP]) {
      const x = 10 + (w * u) / U_TOP;
      const isMargin = u === margin && u !== 1;
      s.appendChild(svg("line", { class: u === 1 ? "key-tick key-limit" : isMargin ? "key-tick key-margin" : "key-tick", x1: x, y1: isMargin ? 12 : 16, x2: x, y2: isMargin ? 32 : 36 }));
      if (isMargin) s.appendChild(svg("text", { class: "key-label", x, y: 10, "text-anchor": "middle" }, `margin ${u.toFixed(2)}`));
      else if (u !== 0.25 && u !== 0.75) s.appendChild(svg("text", { class: "key-label", x, y: 48, "text-anchor": "middle" }, u === 1 ? "1.0 limit" : u.toFixed(u === U_TOP ? 2 : 1)));
    }
    const bar = el("div", { class: "key-row key-scale" });
    bar.appendChild(el("span", { class: "key-title" }, "Utilisation (predicted / limit, conservative)"));
    bar.appendChild(s);
    box.appendChild(bar);

    const items = el("div", { class: "key-row key-items" });
    const swatch = (cls, draw, label) => {
      const item = el("span", { class: `key-item ${cls}` });
      const sw = svg("svg", { class: "key-swatch", viewBox: "-14 -14 28 28", "aria-hidden": "true" });
      draw(sw);
      item.appendChild(sw);
      item.appendChild(el("span", null, label));
      items.appendChild(item);
    };
    const mid = rampColour(palette, 0.55);
    swatch("key-limit-line", (sw) => {
      sw.appendChild(svg("path", { class: "contour-limit-casing", d: "M-12 0H12" }));
      sw.appendChild(svg("path", { class: "contour-limit", d: "M-12 0H12" }));
    }, "limit (1.0)");
    swatch("key-margin-line", (sw) => sw.appendChild(svg("path", { class: "contour-margin", d: "M-12 0H12" })), `margin (${margin.toFixed(2)})`);
    items.appendChild(el("span", { class: "key-zones-title" }, "Screened zones (screening only):"));
    for (const [key, label] of ZONES) {
      swatch(`key-zone key-${key}`, (sw) => {
        sw.appendChild(svg("rect", { x: -12, y: -12, width: 24, height: 24, fill: mid }));
        if (zoneFill) sw.appendChild(svg("rect", { x: -12, y: -12, width: 24, height: 24, fill: `url(#pat-${key})` }));
        const zg = svg("g", { class: `zone-outline zone-outline-${key}` });
        zg.appendChild(svg("path", { class: "zone-line-casing", d: "M-12 6H12" }));
        zg.appendChild(svg("path", { class: "zone-line", d: "M-12 6H12" }));
        sw.appendChild(zg);
      }, label);
    }
    swatch("key-own", (sw) => sw.appendChild(svg("path", { class: "mark-own-hull", d: "M0 -12 C4 -6 5 -1 5 3 L4 9 L-4 9 L-5 3 C-5 -1 -4 -6 0 -12 Z" })), "own ship");
    swatch("key-advice", (sw) => {
      sw.appendChild(svg("circle", { class: "mark-advice-ring", r: 7 }));
      sw.appendChild(svg("path", { class: "mark-advice-cross", d: "M-12 0H-4M4 0H12M0 -12V-4M0 4V12" }));
    }, "suggested");
    if (state && state.polar && Array.isArray(state.polar.attainable_stw_kn)) {
      swatch("key-cap", (sw) => sw.appendChild(svg("path", { class: "speed-cap", d: "M-12 0H12" })), "attainable speed");
    }
    swatch("key-course", (sw) => sw.appendChild(svg("polygon", { class: "mark-course", points: "0,10 -6,-9 6,-9" })), "intended course");
    swatch("key-waves", (sw) => {
      sw.appendChild(svg("line", { class: "wave-shaft", x1: 0, y1: -12, x2: 0, y2: 2 }));
      sw.appendChild(svg("polygon", { class: "wave-head", points: "0,12 -6,1 6,1" }));
    }, "waves from");
    const toggle = el("button", { type: "button", id: "zone-fill", class: "zone-fill-toggle", "aria-pressed": String(zoneFill) }, zoneFill ? "Zone fill: on" : "Zone fill: off");
    toggle.title = "Fill the screened zones and the area over the limit with patterns (they then cover part of the colours)";
    toggle.addEventListener("click", () => setZoneFill(!zoneFill));
    items.appendChild(toggle);
    box.appendChild(items);
  }

  /* Zone fill on or off (off by default: outlines only, nothing covers the utilisation colours). */
  const ZONE_FILL_KEY = "bridge.zoneFill";
  let zoneFill = false;

  function setZoneFill(on) {
    zoneFill = Boolean(on);
    $("chart-wrap").classList.toggle("zones-filled", zoneFill);
    try {
      localStorage.setItem(ZONE_FILL_KEY, zoneFill ? "on" : "off");
    } catch (e) {
      /* no storage: the switch still works for this page */
    }
    drawKey();
  }

  /* ------------------------------------------------------------------------------------------------
   * Freshness: ages advance between answers; stale parts are said to be stale.
   * ------------------------------------------------------------------------------------------------ */
  let state = null;
  let etag = null;
  let lastFull = 0; // performance.now() of the last 200 answer
  let lastContact = 0; // performance.now() of the last answer of any kind
  let lastContactUtc = null;
  let history = null;

  const sinceFull = () => (performance.now() - lastFull) / 1000;
  const linkLost = () => lastContact === 0 || performance.now() - lastContact > cfg.lostMs;

  function ageOf(part) {
    if (!part || !isNum(part.age_s)) return null;
    return part.age_s + sinceFull();
  }

  function isStale(part) {
    if (!part) return true;
    const age = ageOf(part);
    return Boolean(part.stale) || linkLost() || (isNum(part.stale_after_s) && isNum(age) && age > part.stale_after_s);
  }

  function adviceIsCurrent(st) {
    if (!st || !st.advice || !st.status || !st.status.advice_available) return false;
    if (st.advice.status === "unavailable") return false;
    return !isStale(st.ship) && !isStale(st.sea_state);
  }

  function noAdviceReason(st) {
    if (linkLost()) return lastContactUtc ? `no answer from the service since ${lastContactUtc}` : "no answer from the service";
    if (!st) return "no data";
    if (st.status && st.status.reason) return st.status.reason;
    if (st.advice && st.advice.reason) return st.advice.reason;
    if (!st.sea_state) return "no sea-state estimate";
    if (isStale(st.sea_state)) return `sea-state estimate is ${fmtAge(ageOf(st.sea_state))} old`;
    if (isStale(st.ship)) return `own heading and speed are ${fmtAge(ageOf(st.ship))} old`;
    return "no advice from the service";
  }

  let lastFreshKey = "";

  function applyFreshness() {
    const st = state;
    const lost = linkLost();
    const link = $("link-state");
    if (lost) {
      link.dataset.link = "lost";
      link.textContent = lastContactUtc ? `NO CONNECTION since ${lastContactUtc}` : "NO CONNECTION to the service";
    } else {
      link.dataset.link = "live";
      link.textContent = st ? `data of ${fmtUtc(st.generated_utc)}` : "connected";
    }
    const shipStale = isStale(st && st.ship);
    const seaStale = isStale(st && st.sea_state);
    const shipAge = ageOf(st && st.ship);
    const seaAge = ageOf(st && st.sea_state);
    $("ship-age").textContent = shipStale ? `STALE · ${fmtAge(shipAge) || "no data"}` : fmtAge(shipAge) ? `${fmtAge(shipAge)} old` : "";
    $("sea-age").textContent = !st || !st.sea_state ? "" : seaStale ? `STALE · ${fmtAge(seaAge)} old` : `${fmtAge(seaAge)} old`;
    const obsAge = $("obs-age");
    if (obsAge) obsAge.textContent = `${fmtAge(ageOf(st && st.observed_sea))} old`;
    $("box-ship").classList.toggle("stale", shipStale);
    $("box-sea").classList.toggle("stale", Boolean(st && st.sea_state) && seaStale);
    const fromEye = Boolean(st && st.polar_from_eye);
    const chartStale = Boolean(st && st.polar) && (fromEye ? lost : seaStale || lost);
    $("chart-wrap").classList.toggle("stale", chartStale);
    const banner = $("chart-banner");
    if (!st || !st.polar) {
      banner.hidden = false;
      banner.className = "chart-banner chart-banner-none";
      banner.textContent = `NO CHART — ${noAdviceReason(st)}`;
    } else if (chartStale) {
      banner.hidden = false;
      banner.className = "chart-banner chart-banner-stale";
      banner.textContent = lost ? `STALE — ${noAdviceReason(st)}` : `STALE — sea state ${fmtAge(seaAge)} old`;
    } else if (fromEye) {
      const obs = st.observed_sea;
      banner.hidden = false;
      banner.className = "chart-banner chart-banner-eye";
      banner.textContent = `CHART FROM THE SEA OBSERVED BY EYE (${obs.entered_by}, ${fmtUtc(obs.entered_utc)}) — not from measured motions`;
    } else {
      banner.hidden = true;
    }
    renderLink();
    // Re-render what depends on freshness only when it flips.
    const key = `${shipStale}|${seaStale}|${lost}|${adviceIsCurrent(st)}`;
    if (key !== lastFreshKey) {
      lastFreshKey = key;
      renderAdvice();
      drawMarks(st);
      renderShip();
    }
  }

  /* ------------------------------------------------------------------------------------------------
   * Side boxes
   * ------------------------------------------------------------------------------------------------ */
  function bigPair(headingDeg, stwKn, cls) {
    const wrap = el("div", { class: `big-pair ${cls || ""}` });
    const h = el("div", { class: "big-item" });
    h.appendChild(el("span", { class: "big-label" }, "HDG"));
    h.appendChild(el("span", { class: "big-num big-heading" }, fmtHeading(headingDeg)));
    const v = el("div", { class: "big-item" });
    v.appendChild(el("span", { class: "big-label" }, "STW"));
    v.appendChild(el("span", { class: "big-num big-speed" }, isNum(stwKn) ? stwKn.toFixed(1) : "—"));
    v.appendChild(el("span", { class: "big-unit" }, "kn"));
    wrap.appendChild(h);
    wrap.appendChild(v);
    return wrap;
  }

  /* Optional fields from the advisor (drawn when present, skipped when absent):
   *   advice.turn_direction          "port" | "starboard": which way to turn to reach the suggestion
   *   advice.attainable_stw_kn       speed the ship can make at the suggested heading in this sea [kn]
   *   polar.attainable_stw_kn        the same per heading of the polar (one value per heading) [kn] */
  const turnOf = (a) => (a && (a.turn_direction === "port" || a.turn_direction === "starboard") ? a.turn_direction : null);

  function midPair(headingDeg, stwKn) {
    const wrap = el("div", { class: "mid-pair advice-numbers" });
    wrap.appendChild(el("span", { class: "mid-num" }, fmtHeading(headingDeg)));
    wrap.appendChild(el("span", { class: "mid-num" }, isNum(stwKn) ? stwKn.toFixed(1) : "—"));
    wrap.appendChild(el("span", { class: "mid-unit" }, "kn STW"));
    return wrap;
  }

  function renderAdvice() {
    const box = $("advice-body");
    clear(box);
    const st = state;
    const a = st && st.advice;
    const current = adviceIsCurrent(st);
    $("box-advice").dataset.advice = current && a ? a.status : "none";
    if (!current) {
      $("box-advice").dataset.confidence = "";
      const fb = observedFallback(st);
      box.appendChild(el("div", { class: "advice-head advice-none" }, fb ? "NO ADVICE FROM THE MOTIONS" : "NO CURRENT ADVICE"));
      box.appendChild(el("div", { class: "advice-reason" }, `Reason: ${noAdviceReason(st)}.`));
      if (fb) box.appendChild(fallbackBlock(st.observed_sea, fb));
      return;
    }
    const sea = st.sea_state || {};
    const low = sea.confidence_level === "low";
    $("box-advice").dataset.confidence = low ? "low" : sea.confidence_level || "";
    // The box title says SUGGESTED; the words below never read as an order.
    const turn = turnOf(a);
    const heads = {
      keep: "No change suggested",
      change: turn ? `Suggest altering (turning to ${turn}) to` : "Suggest altering to",
      none_acceptable: "NO HEADING AND SPEED INSIDE THE LIMITS; least exceedance at",
    };
    box.appendChild(el("div", { class: `advice-head advice-${a.status}` }, heads[a.status] || a.status));
    if (low) {
      box.appendChild(el("div", { class: "advice-qualifier" }, `Low confidence in the sea-state estimate (${fmtNum(sea.confidence, 2)}): a hint only.`));
    }
    if (a.status === "keep") {
      box.appendChild(el("div", { class: "advice-suggest" }, "present heading and speed meet every limit with margin"));
    }
    if (a.status !== "keep" && isNum(a.advised_heading_deg)) {
      box.appendChild(low ? midPair(a.advised_heading_deg, a.advised_stw_kn) : bigPair(a.advised_heading_deg, a.advised_stw_kn, "advice-numbers"));
    }
    const facts = el("div", { class: "advice-facts" });
    if (isNum(a.utilisation_now)) facts.appendChild(el("span", null, `utilisation now ${fmtNum(a.utilisation_now, 2)}`));
    if (isNum(a.utilisation_advised) && a.status !== "keep") facts.appendChild(el("span", null, `→ ${fmtNum(a.utilisation_advised, 2)} there`));
    if (a.binding_limit) facts.appendChild(el("span", null, `binding: ${a.binding_limit}`));
    if (isNum(a.attainable_stw_kn)) facts.appendChild(el("span", { class: "advice-cap" }, `attainable ≤ ${fmtSpeed(a.attainable_stw_kn)}`));
    box.appendChild(facts);
    if (a.sentence) box.lastChild.title = a.sentence;
    if (low) {
      const check = el("div", { class: "advice-check" });
      check.appendChild(el("span", { class: "advice-check-title" }, "Check by eye before acting: "));
      check.appendChild(el("span", null, `are the main seas from about ${fmtHeading(sea.wave_from_deg)}, about ${fmtNum(sea.hs_m, 1)} m high, about ${fmtNum(sea.tp_s, 0)} s apart? Does the ship roll and pitch as the numbers say?`));
      box.appendChild(check);
    }
  }

  /* The watch's visual sea-state estimate (state.observed_sea, optional; onboard/admin/observedsea.py):
   *   observed_sea.entered_by, entered_utc, age_s, note, systems [{label, hs_m, period_s, wave_from_deg}]
   *   observed_sea.fallback_advice   the polar scored in the observed sea when the motions cannot be used
   * The fallback suggestion is shown only while the link is up and own heading and speed are current. */
  function observedFallback(st) {
    const obs = st && st.observed_sea;
    const fb = obs && obs.fallback_advice;
    if (!fb || linkLost() || isStale(st.ship) || !isNum(fb.advised_heading_deg)) return null;
    return fb;
  }

  function fallbackBlock(obs, fb) {
    const wrap = el("div", { class: "advice-observed" });
    wrap.appendChild(el("div", { class: "advice-observed-head" },
      `Scored in the sea observed by eye (${obs.entered_by}, ${fmtUtc(obs.entered_utc)}), not in measured motions:`));
    const heads = { keep: "No change suggested", none_acceptable: "Nothing inside the limits; least exceedance at" };
    if (heads[fb.status]) wrap.appendChild(el("div", { class: "advice-observed-status" }, heads[fb.status]));
    if (fb.status !== "keep") wrap.appendChild(midPair(fb.advised_heading_deg, fb.advised_stw_kn));
    const facts = el("div", { class: "advice-facts" });
    if (isNum(fb.utilisation_now)) facts.appendChild(el("span", null, `utilisation now ${fmtNum(fb.utilisation_now, 2)}`));
    if (fb.binding_limit) facts.appendChild(el("span", null, `binding: ${fb.binding_limit}`));
    wrap.appendChild(facts);
    if (fb.sentence) wrap.title = fb.sentence;
    return wrap;
  }

  /* Rows of the observation under the estimate's systems (same columns, so the two read side by side);
   * a table of its own when there is no estimate. */
  function observedRows(box, obs, table) {
    let t = table;
    if (!t) {
      t = el("table", { class: "systems systems-observed-only" });
      const hr = el("tr");
      for (const h of ["system", "Hs", "period", "from"]) hr.appendChild(el("th", null, h));
      t.appendChild(hr);
      box.appendChild(t);
    }
    const cols = t.rows[0].cells.length;
    const head = el("tr", { class: "obs-head" });
    const cell = el("td", { colspan: String(cols) });
    cell.appendChild(el("span", { class: "obs-tag" }, "By eye"));
    cell.appendChild(document.createTextNode(` ${obs.entered_by} · ${fmtUtc(obs.entered_utc)} · `));
    cell.appendChild(el("span", { id: "obs-age" }, `${fmtAge(ageOf(obs))} old`));
    if (obs.fallback_advice) cell.appendChild(el("span", { class: "obs-used" }, " · used for the advice"));
    if (obs.note) cell.title = obs.note;
    head.appendChild(cell);
    t.appendChild(head);
    for (const s of obs.systems || []) {
      const tr = el("tr", { class: "obs-row" });
      tr.appendChild(el("td", null, s.label));
      tr.appendChild(el("td", null, `${fmtNum(s.hs_m, 1)} m`));
      tr.appendChild(el("td", null, `${fmtNum(s.period_s, 0)} s`));
      tr.appendChild(el("td", null, fmtHeading(s.wave_from_deg)));
      for (let k = 4; k < cols; k++) tr.appendChild(el("td", null, ""));
      t.appendChild(tr);
    }
  }

  function renderShip() {
    const box = $("ship-body");
    clear(box);
    const ship = state && state.ship;
    if (!ship || !isNum(ship.heading_deg)) {
      box.appendChild(el("div", { class: "plain-none" }, "NO DATA — own heading and speed not received"));
      return;
    }
    box.appendChild(bigPair(ship.heading_deg, ship.stw_kn, "ship-numbers"));
    const facts = el("div", { class: "facts" });
    facts.appendChild(el("span", null, `intended course ${fmtHeading(ship.intended_course_deg)}`));
    const polar = state.polar;
    if (polar && geom && isNum(ship.stw_kn) && !isStale(state.sea_state)) {
      // The utilisation of the cell the ship is in (nearest heading sector and speed ring).
      const i = nearestIndex(polar.headings_deg, ship.heading_deg, true);
      const j = nearestIndex(polar.speeds_kn, ship.stw_kn, false);
      const u = polar.utilisation[i][j];
      facts.appendChild(el("span", { class: `own-band band-word-${bandOf(u, polar.margin)}` }, `utilisation here ${fmtNum(u, 2)} (${BAND_WORDS[bandOf(u, polar.margin)]})`));
    }
    facts.appendChild(el("span", null, `at ${fmtUtc(ship.time_utc)}`));
    box.appendChild(facts);
  }

  function nearestIndex(values, x, circular) {
    let best = 0;
    let bestD = Infinity;
    values.forEach((v, k) => {
      let d = Math.abs(v - x);
      if (circular) d = Math.min(d, 360 - d);
      if (d < bestD) {
        bestD = d;
        best = k;
      }
    });
    return best;
  }

  function renderSea() {
    const box = $("sea-body");
    clear(box);
    const sea = state && state.sea_state;
    const obs = state && state.observed_sea;
    $("observed-link").hidden = body.dataset.logins !== "on";
    if (!sea) {
      box.appendChild(el("div", { class: "plain-none" }, `NO ESTIMATE — ${noAdviceReason(state)}`));
      if (obs) observedRows(box, obs, null);
      return;
    }
    const top = el("div", { class: "sea-top" });
    const hs = el("div", { class: "mid-item" });
    hs.appendChild(el("span", { class: "mid-label" }, "Hs"));
    hs.appendChild(el("span", { class: "mid-num" }, fmtNum(sea.hs_m, 1)));
    hs.appendChild(el("span", { class: "mid-unit" }, "m"));
    top.appendChild(hs);
    const tp = el("div", { class: "mid-item" });
    tp.appendChild(el("span", { class: "mid-label" }, "Tp"));
    tp.appendChild(el("span", { class: "mid-num" }, fmtNum(sea.tp_s, 1)));
    tp.appendChild(el("span", { class: "mid-unit" }, "s"));
    top.appendChild(tp);
    const from = el("div", { class: "mid-item" });
    from.appendChild(el("span", { class: "mid-label" }, "from"));
    from.appendChild(el("span", { class: "mid-num" }, fmtHeading(sea.wave_from_deg)));
    top.appendChild(from);
    box.appendChild(top);
    box.appendChild(el("div", { class: "facts" }, `Tm01 ${fmtNum(sea.tm01_s, 1)} s · spread ${fmtNum(sea.spread_deg, 0)}° · window to ${fmtUtc(sea.window_end_utc)}`));
    if (sea.systems && sea.systems.length) {
      const t = el("table", { class: "systems" });
      const hr = el("tr");
      for (const h of ["system", "Hs", "Tp", "from", "spread"]) hr.appendChild(el("th", null, h));
      t.appendChild(hr);
      for (const s of sea.systems) {
        const tr = el("tr");
        tr.appendChild(el("td", null, s.label));
        tr.appendChild(el("td", null, `${fmtNum(s.hs_m, 1)} m`));
        tr.appendChild(el("td", null, `${fmtNum(s.tp_s, 1)} s`));
        tr.appendChild(el("td", null, fmtHeading(s.wave_from_deg)));
        tr.appendChild(el("td", null, `${fmtNum(s.spread_deg, 0)}°`));
        t.appendChild(tr);
      }
      box.appendChild(t);
      if (obs) observedRows(box, obs, t);
    } else if (obs) {
      observedRows(box, obs, null);
    }
    // The watch's visual estimate used as the estimator's prior in this window (optional sea_state.prior).
    if (sea.prior && sea.prior.sentence) box.appendChild(el("div", { class: "facts sea-prior" }, sea.prior.sentence));
    // The sea the advice was worked out in, when several windows' estimates were combined (optional sea_state.advice_sea).
    if (sea.advice_sea && sea.advice_sea.sentence) box.appendChild(el("div", { class: "facts sea-advice" }, sea.advice_sea.sentence));
    const conf = el("div", { class: `confidence confidence-${sea.confidence_level}` });
    conf.appendChild(el("span", { class: "confidence-level" }, `Confidence ${String(sea.confidence_level).toUpperCase()}`));
    conf.appendChild(el("span", { class: "confidence-value" }, fmtNum(sea.confidence, 2)));
    box.appendChild(conf);
    if (sea.confidence_reasons && sea.confidence_reasons.length) {
      const ul = el("ul", { class: "reasons" });
      for (const r of sea.confidence_reasons) ul.appendChild(el("li", null, r));
      box.appendChild(ul);
    }
  }

  function renderSensors() {
    const box = $("sensors-body");
    clear(box);
    const sensors = (state && state.sensors) || [];
    if (!sensors.length) {
      box.appendChild(el("div", { class: "plain-none" }, "no sensor report"));
      return;
    }
    const ul = el("ul", { class: "sensor-list" });
    for (const s of sensors) {
      const li = el("li", { class: `sensor sensor-${s.status}`, "data-channel": s.channel });
      li.appendChild(el("span", { class: "sensor-channel" }, s.channel));
      li.appendChild(el("span", { class: "sensor-status" }, s.status === "ok" ? "ok" : s.status.toUpperCase()));
      const detail = [s.detail, s.last_utc && s.status !== "ok" ? `last ${fmtUtc(s.last_utc)}` : ""].filter(Boolean).join(" · ");
      if (detail) li.appendChild(el("span", { class: "sensor-detail" }, detail));
      ul.appendChild(li);
    }
    box.appendChild(ul);
  }

  /* The data link: the MQTT broker (unreachable shown as such), the age of the last message per topic
   * (advanced by the page between full answers) and the rejected messages by reason. */
  function renderLink() {
    const box = $("link-body");
    clear(box);
    const link = state && state.link;
    if (!link) return;
    const since = sinceFull();
    const line = el("div", { class: "link-line" });
    if (!link.broker) {
      line.appendChild(el("span", null, "no broker: fed in-process (demo)"));
      box.dataset.broker = "none";
    } else if (link.connected) {
      line.appendChild(el("span", null, `broker ${link.broker} connected`));
      box.dataset.broker = "connected";
    } else {
      box.dataset.broker = "down";
      const down = isNum(link.down_for_s) ? ` for ${fmtAge(link.down_for_s + since)}` : "";
      line.appendChild(el("span", { class: "link-down" }, `BROKER ${link.broker} NOT REACHABLE${down}`));
      if (link.problem) line.appendChild(el("span", { class: "link-problem" }, link.problem));
    }
    box.appendChild(line);
    const topics = link.topics || [];
    if (topics.length) {
      const t = el("div", { class: "link-topics" });
      for (const tp of topics.slice(0, 4)) {
        const name = tp.topic.split("/").slice(-2).join("/");
        t.appendChild(el("span", { class: "link-topic", "data-topic": tp.topic, title: tp.topic }, `${name} ${fmtAge(tp.age_s + since)} ago`));
      }
      box.appendChild(t);
    } else if (link.broker) {
      box.appendChild(el("div", { class: "link-topics" }, "no message received yet"));
    }
    const rej = Object.entries(link.rejected || {}).filter(([, n]) => n > 0);
    if (rej.length) {
      box.appendChild(el("div", { class: "link-rejects" }, `rejected: ${rej.map(([r, n]) => `${r} ${n}`).join(", ")}`));
    }
  }

  function renderCondition() {
    const box = $("condition-body");
    clear(box);
    const c = state && state.condition;
    $("vessel-name").textContent = (state && state.vessel && state.vessel.name) || "";
    $("condition-short").textContent = c ? c.name : "";
    if (!c) {
      box.appendChild(el("div", { class: "plain-none" }, "not known"));
      return;
    }
    box.appendChild(el("div", { class: "condition-name" }, c.name));
    box.appendChild(el("div", { class: "facts" }, `draft ${fmtNum(c.draft_m, 1)} m · GM ${fmtNum(c.gm_m, 2)} m · roll period ${fmtNum(c.roll_period_s, 1)} s`));
    // The roll period identified from the measured roll of the last estimate (optional sea_state.roll),
    // beside the condition's; when the GM it implies differs from the condition's, the same line becomes a
    // plain caution. On small screens it takes the place of the condition's name (shown in the top line).
    const r = state && state.sea_state && state.sea_state.roll;
    box.classList.toggle("with-roll", Boolean(r && r.period_measured_s != null));
    if (!r || r.period_measured_s == null) return;
    const cond = r.period_condition_s != null ? r.period_condition_s : c.roll_period_s;
    const line = el("div", { class: r.gm_warning ? "roll-gm-warning" : "facts" });
    if (r.gm_warning) line.appendChild(document.createTextNode("Caution: "));
    line.appendChild(el("span", { class: "roll-identified" },
      `roll period measured ${fmtNum(r.period_measured_s, 1)} s (condition ${fmtNum(cond, 1)} s)`));
    if (r.gm_warning) {
      const gm = r.implied_gm_m != null ? ` ${fmtNum(r.implied_gm_m, 2)} m` : " a GM";
      line.appendChild(document.createTextNode(
        ` implies GM${gm}, not the loading condition's. Check the loading computer.`));
    }
    box.appendChild(line);
  }

  /* ------------------------------------------------------------------------------------------------
   * Alerts: priority after MSC.302(87) in words, colour and shape; unacknowledged ones flash.
   * ------------------------------------------------------------------------------------------------ */
  const USER_KEY = "bridge.user";

  /* States after IMO MSC.302(87): active-unacknowledged (tag flashes), active-acknowledged (steady),
   * rectified-unacknowledged (hollow tag, "RECTIFIED", stays until acknowledged). The tag shapes
   * (triangle for a warning, square for a caution, hollow when rectified) are a project choice: they
   * were not checked against the IEC 62923 / IEC 62288 alert icons, which we could not consult. */
  const STATE_WORDS = {
    active_unacknowledged: "not acknowledged",
    active_acknowledged: "acknowledged",
    rectified_unacknowledged: "rectified, not acknowledged",
  };

  function renderAlerts() {
    const box = $("alerts-body");
    clear(box);
    const alerts = (state && state.alerts) || [];
    $("box-alerts").dataset.count = String(alerts.length);
    if (!alerts.length) {
      box.appendChild(el("div", { class: "plain-none" }, "no open alerts"));
      return;
    }
    const order = { alarm: 0, warning: 1, caution: 2 };
    const stOrder = { active_unacknowledged: 0, rectified_unacknowledged: 1, active_acknowledged: 2 };
    const stateOf = (a) => a.state || (a.acknowledged ? "active_acknowledged" : "active_unacknowledged");
    const sorted = alerts.slice().sort((x, y) => stOrder[stateOf(x)] - stOrder[stateOf(y)] || order[x.level] - order[y.level] || y.id - x.id);
    // At most MAX_ALERT_ROWS rows, so the column never scrolls; the rest are counted below them.
    const MAX_ALERT_ROWS = 3;
    for (const a of sorted.slice(0, MAX_ALERT_ROWS)) {
      const st = stateOf(a);
      const ids = a.ids && a.ids.length ? a.ids : [a.id];
      const cls = st === "active_unacknowledged" ? "unacked" : st === "rectified_unacknowledged" ? "rectified" : "acked";
      const row = el("div", { class: `alert alert-${a.level} ${cls}`, "data-alert-id": a.id, "data-state": st, "data-count": a.count || 1 });
      const tag = el("span", { class: "alert-tag" });
      tag.appendChild(el("span", { class: "alert-shape", "aria-hidden": "true" }));
      tag.appendChild(el("span", { class: "alert-level" }, a.level.toUpperCase()));
      row.appendChild(tag);
      const text = el("div", { class: "alert-text" });
      if (st === "rectified_unacknowledged") text.appendChild(el("div", { class: "alert-rectified" }, `RECTIFIED ${fmtUtc(a.rectified_utc || a.cleared_utc)}: no longer present`));
      text.appendChild(el("div", { class: "alert-body", title: a.text }, a.text));
      const times = (a.count || 1) > 1 ? `×${a.count}, first ${fmtUtc(a.first_raised_utc)}, last ${fmtUtc(a.raised_utc)}` : `raised ${fmtUtc(a.raised_utc)}`;
      const when = a.acknowledged ? `${times} · acknowledged ${fmtUtc(a.acknowledged_utc)} by ${a.acknowledged_by}` : `${times} · ${STATE_WORDS[st]}`;
      text.appendChild(el("div", { class: "alert-when" }, when));
      row.appendChild(text);
      if (!a.acknowledged) {
        const b = el("button", { type: "button", class: "ack-button", "data-alert-id": a.id }, "Acknowledge");
        b.addEventListener("click", () => acknowledge(ids));
        row.appendChild(b);
      }
      box.appendChild(row);
    }
    if (sorted.length > MAX_ALERT_ROWS) {
      const rest = sorted.slice(MAX_ALERT_ROWS).reduce((n, a) => n + (a.count || 1), 0);
      box.appendChild(el("div", { class: "alerts-more", "data-more": rest }, `+ ${rest} more (acknowledge the ones above to see them)`));
    }
  }

  async function acknowledge(ids) {
    const input = $("watch-user");
    const msg = $("alerts-message");
    const user = input.value.trim();
    if (!user) {
      msg.textContent = "Type your name under 'On watch' first; the acknowledgement is recorded with it.";
      input.focus();
      return;
    }
    try {
      // When the service keeps logins, acknowledging needs an officer login: send the session's CSRF token.
      const headers = { "Content-Type": "application/json" };
      if (document.body.dataset.logins === "on") try {
        const s = await fetch("/admin/api/session", { cache: "no-store" });
        if (s.ok) {
          const info = await s.json();
          if (info && info.csrf_token) headers["X-CSRF-Token"] = info.csrf_token;
        }
      } catch (e) { /* no administration part: plain acknowledgement */ }
      // An aggregated row acknowledges every alert it stands for.
      const failed = [];
      for (const id of ids) {
        const res = await fetch(`/api/alerts/${id}/acknowledge`, {
          method: "POST",
          headers,
          body: JSON.stringify({ user }),
          cache: "no-store",
        });
        const data = await res.json().catch(() => ({}));
        if (!res.ok && res.status !== 409) failed.push(data.error || res.status);
      }
      msg.textContent = failed.length ? `Not acknowledged: ${failed[0]}.` : "";
    } catch (e) {
      msg.textContent = "Not acknowledged: no answer from the service.";
    }
    etag = null;
    poll(false);
  }

  /* ------------------------------------------------------------------------------------------------
   * Trend of the last hours: Hs and the utilisation at own heading and speed.
   * ------------------------------------------------------------------------------------------------ */
  function drawTrend() {
    const box = $("trend-body");
    clear(box);
    const h = history;
    if (!h || !h.times_utc || !h.times_utc.length) {
      box.appendChild(el("div", { class: "plain-none" }, "no samples yet"));
      return;
    }
    const times = h.times_utc.map((t) => Date.parse(t));
    const tEnd = state && state.generated_utc ? Math.max(Date.parse(state.generated_utc), times[times.length - 1]) : times[times.length - 1];
    const tStart = tEnd - cfg.historyHours * 3600e3;
    const margin = state && state.polar ? state.polar.margin : null;
    const hsMax = Math.ceil(Math.max(1, ...h.hs_m.filter(isNum)) * 1.15);
    const uMax = Math.max(1.2, ...h.utilisation.filter(isNum)) * 1.05;
    box.appendChild(lineChart("trend-hs", "Hs [m]", times, h.hs_m, tStart, tEnd, 0, hsMax, []));
    const refs = [{ y: 1, cls: "ref-limit", label: "limit" }];
    if (isNum(margin)) refs.push({ y: margin, cls: "ref-margin", label: "margin" });
    box.appendChild(lineChart("trend-u", "Utilisation at own heading/speed", times, h.utilisation, tStart, tEnd, 0, uMax, refs));
  }

  function lineChart(id, title, times, values, t0, t1, y0, y1, refs) {
    const W = 420;
    const H = 116;
    const L = 38;
    const B = 18;
    const T = 20;
    const RIGHT = 18;
    const s = svg("svg", { id, class: "trend", viewBox: `0 0 ${W} ${H}`, role: "img", "aria-label": title });
    const x = (t) => L + ((t - t0) / (t1 - t0)) * (W - L - RIGHT);
    const y = (v) => T + (1 - (v - y0) / (y1 - y0)) * (H - T - B);
    s.appendChild(svg("text", { class: "trend-title", x: L, y: 13 }, title));
    s.appendChild(svg("line", { class: "trend-axis", x1: L, y1: H - B, x2: W - RIGHT, y2: H - B }));
    s.appendChild(svg("line", { class: "trend-axis", x1: L, y1: T, x2: L, y2: H - B }));
    const hours = Math.round((t1 - t0) / 3600e3);
    for (let k = 0; k <= hours; k += hours > 8 ? 3 : 1) {
      const t = t1 - k * 3600e3;
      s.appendChild(svg("line", { class: "trend-grid", x1: x(t), y1: T, x2: x(t), y2: H - B }));
      s.appendChild(svg("text", { class: "trend-label", x: x(t), y: H - 3, "text-anchor": "middle" }, k === 0 ? "now" : `−${k} h`));
    }
    const ticks = refs.length ? [y0, 0.5] : [y0, (y0 + y1) / 2, y1];
    for (const v of ticks) {
      s.appendChild(svg("text", { class: "trend-label", x: L - 5, y: y(v) + 4, "text-anchor": "end" }, v.toFixed(1)));
    }
    refs.forEach((r, k) => {
      s.appendChild(svg("line", { class: `trend-ref ${r.cls}`, x1: L, y1: y(r.y), x2: W - RIGHT, y2: y(r.y) }));
      // Reference labels inside the plot at the left end, one above and one below its line.
      const above = k === 0;
      s.appendChild(svg("text", { class: "trend-ref-label", x: L + 4, y: above ? y(r.y) - 3 : y(r.y) + 13 }, `${r.label} ${r.y.toFixed(r.y === 1 ? 1 : 2)}`));
    });
    let d = "";
    let pen = false;
    times.forEach((t, k) => {
      const v = values[k];
      if (!isNum(v) || t < t0) {
        pen = false;
        return;
      }
      d += `${pen ? "L" : "M"}${x(t).toFixed(1)} ${y(Math.min(v, y1)).toFixed(1)}`;
      pen = true;
    });
    if (d) s.appendChild(svg("path", { class: "trend-line", d }));
    return s;
  }

  /* ------------------------------------------------------------------------------------------------
   * Whole-page render and the polling loop
   * ------------------------------------------------------------------------------------------------ */
  function render() {
    const st = state;
    const polar = st && st.polar;
    const sig = polar ? JSON.stringify(polar) : "none";
    if (sig !== polarSig) {
      polarSig = sig;
      geom = polar ? buildGeometry(polar) : null;
      drawCells(polar);
      drawOverlays(polar);
      drawLimit(polar);
      drawGrid();
      drawKey();
      if (pickedCell && polar && pickedCell[0] < cellNodes.length) {
        const node = cellNodes.find((n) => Number(n.dataset.i) === pickedCell[0] && Number(n.dataset.j) === pickedCell[1]);
        if (node) showCell(node);
      }
    }
    drawMarks(st);
    renderAdvice();
    renderShip();
    renderSea();
    renderSensors();
    renderLink();
    renderCondition();
    renderAlerts();
    lastFreshKey = "";
    applyFreshness();
  }

  let pollTimer = null;

  async function poll(reschedule = true) {
    try {
      const headers = etag ? { "If-None-Match": etag } : {};
      const res = await fetch("/api/state", { cache: "no-store", headers });
      if (res.status === 304) {
        lastContact = performance.now();
        lastContactUtc = new Date().toISOString().slice(11, 19) + "Z";
      } else if (res.ok) {
        const data = await res.json();
        etag = res.headers.get("ETag");
        state = data;
        // No chart from measured motions, but one scored in the sea the watch observed by eye (optional
        // observed_sea.fallback_polar): drawn with its own banner, never passed off as the measured one.
        const eyePolar = data && !data.polar && data.observed_sea && data.observed_sea.fallback_polar;
        if (eyePolar) {
          state.polar = eyePolar;
          state.polar_from_eye = true;
        }
        lastFull = performance.now();
        lastContact = lastFull;
        lastContactUtc = new Date().toISOString().slice(11, 19) + "Z";
        render();
        body.dataset.loaded = "yes"; // the first state is drawn (tests wait for it)
      }
    } catch (e) {
      /* no answer: the freshness check below says so on the page */
    }
    applyFreshness();
    if (reschedule) {
      clearTimeout(pollTimer);
      pollTimer = setTimeout(poll, cfg.pollMs);
    }
  }

  async function loadHistory() {
    try {
      const res = await fetch(`/api/history?hours=${encodeURIComponent(cfg.historyHours)}`, { cache: "no-store" });
      if (res.ok) {
        history = await res.json();
        drawTrend();
      }
    } catch (e) {
      /* keep the last trend; the link state says the service is unreachable */
    }
    setTimeout(loadHistory, cfg.historyMs);
  }

  function start() {
    let saved = "day";
    try {
      saved = localStorage.getItem(PALETTE_KEY) || "day";
      $("watch-user").value = localStorage.getItem(USER_KEY) || "";
    } catch (e) {
      /* no storage: defaults */
    }
    $("watch-user").addEventListener("change", (ev) => {
      try {
        localStorage.setItem(USER_KEY, ev.target.value.trim());
      } catch (e) {
        /* ignore */
      }
    });
    for (const b of document.querySelectorAll(".palette-switch button")) {
      b.addEventListener("click", () => setPalette(b.dataset.palette));
    }
    setPalette(saved);
    try {
      zoneFill = localStorage.getItem(ZONE_FILL_KEY) === "on";
    } catch (e) {
      zoneFill = false;
    }
    setZoneFill(zoneFill);
    wireChartPointer();
    drawGrid();
    drawKey();
    applyFreshness();
    poll();
    loadHistory();
    setInterval(applyFreshness, 1000);
  }

  start();
})();
