/**
 * SVG plot of a line profile (the `Accept: image/svg+xml` reply of POST /v1/line-profile); our own
 * layout, built as a plain string like the shadow figure (routes/shadow.ts).
 *
 * What is drawn: the flux DENSITY per unit of the x axis, flux[i] / (edges[i+1] - edges[i]),
 * normalised to a peak of 1, as a step curve (each bin at its own width, so logarithmic or
 * irregular bins give the right shape) on a linear x axis in the unit of the edges. Around it: a
 * grid with round tick values, axis titles named by the kind of unit (photon energy, frequency,
 * wavelength), a dashed line at the rest value (converted to the unit of the edges; drawn when it
 * lies inside the x range), dotted markers at the ends of the line (`line_range`), and a caption with the
 * geometry, the accuracy and the share of the line inside the bins.
 *
 * Reading the figure back (the tests do): the plot area, `<rect id="plot-area">`, carries its data
 * range as data-x0 / data-x1 (x at its left / right side, in data-unit) and data-y0 / data-y1
 * (normalised density at its bottom / top). The curve is `<path id="profile">`, written with
 * absolute M/H/V commands only: it starts on the baseline at the first edge, and each `V` is the
 * level of the bins from the current x up to the next `H`. Consecutive bins whose printed level is
 * the same are merged (lossless at the printed precision, 0.01 px), which keeps 10 000-bin profiles
 * compact.
 *
 * The renderer is pure and never throws: missing or malformed fields print '?', unusable bins give
 * an empty plot with a note, and no NaN or Infinity reaches the output.
 */
import { hzToSpectral, spectralKind, spectralToHz } from '../physics/units.js';

const W = 760;
const H = 560;
const PLOT = { x: 90, y: 70, w: 620, h: 330 };
/** Top of the y axis in units of the peak: headroom above the curve for the line-range markers. */
const Y_TOP = 1.1;

function num(x: unknown): number {
  if (typeof x === 'number') return x;
  if (x && typeof x === 'object' && typeof (x as { value?: unknown }).value === 'number') return (x as { value: number }).value;
  return NaN;
}

function obj(x: unknown): Record<string, unknown> {
  return x && typeof x === 'object' && !Array.isArray(x) ? (x as Record<string, unknown>) : {};
}

function str(x: unknown): string | undefined {
  return typeof x === 'string' && x.length > 0 ? x : undefined;
}

function escapeXml(s: string): string {
  return s
    .replace(/[\u0000-\u0008\u000B\u000C\u000E-\u001F\uFFFE\uFFFF]/g, '')
    .replace(/&/g, '&amp;')
    .replace(/</g, '&lt;')
    .replace(/>/g, '&gt;')
    .replace(/"/g, '&quot;');
}

/** A number for people: 4 significant digits, exponent outside [1e-3, 1e5), '?' when not finite. */
function fmt(x: number, digits = 4): string {
  if (!Number.isFinite(x)) return '?';
  return Math.abs(x) >= 1e5 || (Math.abs(x) < 1e-3 && x !== 0) ? x.toExponential(digits - 1).replace(/\.?0+e/, 'e') : Number(x.toPrecision(digits)).toString();
}

/** Pixel coordinates: two decimals. */
const f = (v: number) => v.toFixed(2);

/** A round step (1, 2 or 5 times a power of ten) giving about `target` intervals over `span` (> 0, finite). */
function niceStep(span: number, target: number): { step: number; exp: number } {
  const raw = span / target;
  let exp = Math.floor(Math.log10(raw));
  const r = raw / Math.pow(10, exp);
  let m = r < 1.5 ? 1 : r < 3.5 ? 2 : r < 7.5 ? 5 : 10;
  if (m === 10) {
    m = 1;
    exp += 1;
  }
  return { step: m * Math.pow(10, exp), exp };
}

/** Tick label of a multiple of a step of order 10^exp, shown with just enough digits to tell neighbours apart. */
function tickLabel(v: number, exp: number): string {
  if (v === 0) return '0';
  const mag = Math.floor(Math.log10(Math.abs(v)));
  if (Math.abs(v) >= 1e5 || mag < -3) {
    const s = v.toExponential(Math.min(20, Math.max(0, mag - exp)));
    return s.replace(/\.?0+e/, 'e').replace('e+', 'e');
  }
  return v.toFixed(Math.min(20, Math.max(0, -exp)));
}

/** The quantity on the x axis by the kind of its unit (physics/units.ts). */
function xQuantity(unit: string | undefined): string {
  if (unit === undefined) return 'Observed spectral value';
  try {
    const kind = spectralKind(unit);
    return kind === 'energy' ? 'Observed photon energy' : kind === 'frequency' ? 'Observed frequency' : 'Observed wavelength';
  } catch {
    return 'Observed spectral value';
  }
}

interface Bins {
  edges: number[];
  density: number[]; // normalised, peak 1 (all 0 when there is no flux)
  hasFlux: boolean;
  note?: string;
}

/** Edges and normalised densities, or a note saying why nothing can be drawn. */
function readBins(result: Record<string, unknown>): Bins | { note: string } {
  const e = obj(result.edges).value;
  const fl = result.flux;
  if (!Array.isArray(e) || e.length < 2 || !e.every((x) => typeof x === 'number' && Number.isFinite(x))) return { note: 'No usable bin edges in the result.' };
  if (!Array.isArray(fl) || fl.length === 0) return { note: 'No flux values in the result.' };
  let edges = (e as number[]).slice();
  let flux = fl.map((x) => (typeof x === 'number' && Number.isFinite(x) && x > 0 ? x : 0));
  const notes: string[] = [];
  const n = Math.min(flux.length, edges.length - 1);
  if (flux.length !== edges.length - 1) notes.push(`${flux.length} flux values for ${edges.length - 1} bins: the first ${n} are drawn.`);
  edges = edges.slice(0, n + 1);
  flux = flux.slice(0, n);
  if (edges[n] < edges[0]) {
    edges.reverse();
    flux.reverse();
  }
  for (let i = 0; i < n; i++) if (!(edges[i + 1] > edges[i])) return { note: 'The bin edges are not strictly monotonic.' };
  if (!Number.isFinite(edges[n] - edges[0])) return { note: 'The bin edges span more than double precision can hold.' };
  const density = new Array<number>(n);
  let peak = 0;
  for (let i = 0; i < n; i++) {
    density[i] = flux[i] / (edges[i + 1] - edges[i]);
    if (density[i] > peak) peak = density[i];
  }
  if (!Number.isFinite(peak)) return { note: 'A bin is too narrow for its flux density to be represented.' };
  const hasFlux = peak > 0;
  for (let i = 0; i < n; i++) density[i] = hasFlux ? density[i] / peak : 0;
  if (!hasFlux) notes.push('No line flux falls inside the bins.');
  return { edges, density, hasFlux, note: notes.length > 0 ? notes.join(' ') : undefined };
}

/** A labelled step plot of the profile: flux density per unit of the x axis, peak 1. */
export function lineProfileSvg(result: Record<string, unknown>): string {
  const bins = readBins(result);
  const drawable = 'edges' in bins;
  const unitRaw = str(obj(result.edges).unit);
  const unit = unitRaw ?? '?';
  const fluxKind = result.flux_kind === 'photon' ? 'Photon' : result.flux_kind === 'energy' ? 'Energy' : undefined;

  // axes: x over the edges exactly, y from 0 to Y_TOP
  const x0 = drawable ? bins.edges[0] : 0;
  const x1 = drawable ? bins.edges[bins.edges.length - 1] : 1;
  const span = x1 - x0;
  const sx = (v: number) => PLOT.x + ((v - x0) / span) * PLOT.w;
  const sy = (d: number) => PLOT.y + PLOT.h - (d / Y_TOP) * PLOT.h;
  const base = PLOT.y + PLOT.h;

  const parts: string[] = [];
  const quantity = xQuantity(unitRaw);
  parts.push(`<?xml version="1.0" encoding="UTF-8"?>`);
  parts.push(`<svg xmlns="http://www.w3.org/2000/svg" width="${W}" height="${H}" viewBox="0 0 ${W} ${H}" font-family="sans-serif" font-size="13">`);
  parts.push(`<title>${escapeXml(`Emission-line profile from a thin disk around a black hole: ${fluxKind ? fluxKind.toLowerCase() + ' ' : ''}flux density against ${quantity.toLowerCase()} [${unit}]`)}</title>`);
  parts.push(`<rect x="0" y="0" width="${W}" height="${H}" fill="#ffffff"/>`);

  // grid and tick labels
  const xt: number[] = [];
  let xExp = 0;
  if (drawable) {
    const { step, exp } = niceStep(span, 6);
    xExp = exp;
    const k0 = Math.ceil(x0 / step - 1e-9);
    const k1 = Math.floor(x1 / step + 1e-9);
    for (let k = k0; k <= k1 && xt.length < 50; k++) xt.push(k * step);
  }
  const yt = [0, 0.2, 0.4, 0.6, 0.8, 1];
  parts.push(`<g id="grid" stroke="#e3e3e3" stroke-width="1">`);
  for (const v of xt) parts.push(`<line x1="${f(sx(v))}" y1="${f(PLOT.y)}" x2="${f(sx(v))}" y2="${f(base)}"/>`);
  for (const v of yt) parts.push(`<line x1="${f(PLOT.x)}" y1="${f(sy(v))}" x2="${f(PLOT.x + PLOT.w)}" y2="${f(sy(v))}"/>`);
  parts.push(`</g>`);
  parts.push(`<g id="x-ticks" fill="#333333" font-size="11" text-anchor="middle">`);
  for (const v of xt) parts.push(`<text x="${f(sx(v))}" y="${f(base + 17)}">${escapeXml(tickLabel(v, xExp))}</text>`);
  parts.push(`</g>`);
  parts.push(`<g id="y-ticks" fill="#333333" font-size="11" text-anchor="end">`);
  for (const v of yt) parts.push(`<text x="${f(PLOT.x - 8)}" y="${f(sy(v) + 4)}">${v === 0 || v === 1 ? String(v) : v.toFixed(1)}</text>`);
  parts.push(`</g>`);

  // the curve
  if (drawable) {
    const { edges, density } = bins;
    const n = density.length;
    const xs = edges.map((v) => f(sx(v)));
    const B = f(base);
    const d: string[] = [`M${xs[0]} ${B}`];
    let curY = B;
    let curX = xs[0];
    for (let i = 0; i < n; i++) {
      const y = f(sy(density[i]));
      if (y === curY) continue;
      if (xs[i] !== curX) d.push(`H${xs[i]}`);
      d.push(`V${y}`);
      curX = xs[i];
      curY = y;
    }
    if (xs[n] !== curX) d.push(`H${xs[n]}`);
    if (curY !== B) d.push(`V${B}`);
    parts.push(`<path id="profile" d="${d.join(' ')}" fill="#2b6cb0" fill-opacity="0.18" stroke="#1a4f8a" stroke-width="1.5" stroke-linejoin="miter"/>`);
  }
  if (!drawable || !bins.hasFlux) {
    const msg = drawable ? 'No line flux inside the bins' : 'Nothing to plot: no usable bins';
    parts.push(`<text id="empty" x="${f(PLOT.x + PLOT.w / 2)}" y="${f(PLOT.y + PLOT.h / 2)}" text-anchor="middle" font-size="15" fill="#777777">${msg}</text>`);
  }

  // rest value and the ends of the line
  const rest = obj(result.rest);
  const restGiven = num(rest.value);
  const restGivenUnit = str(rest.unit);
  // the rest value in the unit of the x axis (nu = c/lambda = E/h: physics/units.ts)
  let restValue = restGiven;
  let restUnit = restGivenUnit;
  if (restGivenUnit !== undefined && unitRaw !== undefined && restGivenUnit !== unitRaw && Number.isFinite(restGiven) && restGiven > 0) {
    try {
      restValue = hzToSpectral(spectralToHz(restGiven, restGivenUnit), unitRaw);
      restUnit = unitRaw;
    } catch {
      restUnit = undefined; // not convertible: no rest line
    }
  }
  const legend: string[] = [];
  const legendY = PLOT.y - 14;
  let lx = PLOT.x;
  const legendItem = (mark: string, label: string) => {
    legend.push(mark.replace(/\{x\}/g, String(lx)).replace(/\{x2\}/g, String(lx + 26)));
    legend.push(`<text x="${lx + 32}" y="${legendY + 4}">${escapeXml(label)}</text>`);
    lx += 44 + Math.round(label.length * 6.3);
  };
  if (drawable) legendItem(`<rect x="{x}" y="${legendY - 6}" width="26" height="12" fill="#2b6cb0" fill-opacity="0.18" stroke="#1a4f8a" stroke-width="1.5"/>`, 'profile');
  if (drawable && restUnit !== undefined && restUnit === unitRaw && Number.isFinite(restValue) && restValue >= x0 && restValue <= x1) {
    const x = f(sx(restValue));
    parts.push(`<line id="rest" x1="${x}" y1="${f(PLOT.y)}" x2="${x}" y2="${f(base)}" stroke="#c05621" stroke-width="1.5" stroke-dasharray="6 4" data-value="${restValue}"/>`);
    legendItem(`<line x1="{x}" y1="${legendY}" x2="{x2}" y2="${legendY}" stroke="#c05621" stroke-width="1.5" stroke-dasharray="6 4"/>`, `rest value ${fmt(restValue)} ${unit}`);
  }
  const lr = obj(result.line_range);
  const ends: Array<[string, Record<string, unknown>]> = [
    ['line-low', obj(lr.low)],
    ['line-high', obj(lr.high)],
  ];
  let marked = 0;
  for (const [id, q] of ends) {
    const v = num(q.value);
    if (!drawable || str(q.unit) !== unitRaw || !Number.isFinite(v) || v < x0 || v > x1) continue;
    const x = f(sx(v));
    parts.push(`<line id="${id}" x1="${x}" y1="${f(PLOT.y)}" x2="${x}" y2="${f(base)}" stroke="#555555" stroke-width="1" stroke-dasharray="2 3" data-value="${v}"/>`);
    marked++;
  }
  if (marked > 0) legendItem(`<line x1="{x}" y1="${legendY}" x2="{x2}" y2="${legendY}" stroke="#555555" stroke-width="1" stroke-dasharray="2 3"/>`, 'ends of the line (g_min, g_max)');
  if (legend.length > 0) parts.push(`<g id="legend" font-size="12">`, ...legend, `</g>`);

  // frame, axis titles
  const dataAttrs = drawable ? ` data-x0="${x0}" data-x1="${x1}" data-y0="0" data-y1="${Y_TOP}" data-unit="${escapeXml(unit)}"` : ` data-y0="0" data-y1="${Y_TOP}"`;
  parts.push(`<rect id="plot-area" x="${PLOT.x}" y="${PLOT.y}" width="${PLOT.w}" height="${PLOT.h}" fill="none" stroke="#555555" stroke-width="1"${dataAttrs}/>`);
  parts.push(`<text id="x-label" x="${f(PLOT.x + PLOT.w / 2)}" y="${f(base + 40)}" text-anchor="middle">${escapeXml(`${quantity} [${unit}]`)}</text>`);
  const yx = PLOT.x - 48;
  const ym = PLOT.y + PLOT.h / 2;
  parts.push(
    `<text id="y-label" x="${f(yx)}" y="${f(ym)}" text-anchor="middle" transform="rotate(-90 ${f(yx)} ${f(ym)})">${escapeXml(`${fluxKind ? fluxKind + ' flux' : 'Flux'} density${unitRaw !== undefined ? ' per ' + unitRaw : ''} (peak = 1)`)}</text>`,
  );

  // title and caption
  const model = result.model === 'schwarzschild' ? 'a non-rotating (Schwarzschild)' : result.model === 'kerr' ? 'a rotating (Kerr)' : 'a';
  parts.push(`<text id="heading" x="${W / 2}" y="28" text-anchor="middle" font-size="16" font-weight="bold">${escapeXml(`Line profile from a thin Keplerian disk around ${model} black hole`)}</text>`);
  const inc = obj(result.inclination);
  const incDeg = Number.isFinite(num(inc.deg)) ? num(inc.deg) : (num(inc.value) * 180) / Math.PI;
  const disk = obj(result.disk);
  const rg = (k: string) => num(obj(disk[k]).rg);
  const acc = obj(result.accuracy);
  const level = str(acc.level) ?? '?';
  const frac = num(result.fraction_in_range);
  const restText = Number.isFinite(restGiven) ? `${fmt(restGiven)} ${restGivenUnit ?? '?'}` : '?';
  const caption1 = `Spin a* = ${fmt(num(result.spin))} · inclination ${fmt(incDeg)}° · disk from r_in = ${fmt(rg('r_in'))} rg to r_out = ${fmt(rg('r_out'))} rg (ISCO ${fmt(rg('isco'))} rg)`;
  const caption2 = `Rest value ${restText} · ${fluxKind ? fluxKind.toLowerCase() : '?'} flux · redshift factor g from ${fmt(num(result.g_min))} to ${fmt(num(result.g_max))}`;
  const caption3 = `Accuracy ${level} (L1 error estimate ${fmt(num(acc.l1_estimate))}, ${Number.isFinite(num(result.rays)) ? String(Math.round(num(result.rays))) : '?'} rays) · ${fmt(frac * 100)} % of the line lies inside the bins`;
  const cy = base + 72;
  parts.push(`<text id="caption" x="${W / 2}" y="${f(cy)}" text-anchor="middle">${escapeXml(caption1)}</text>`);
  parts.push(`<text id="caption-2" x="${W / 2}" y="${f(cy + 21)}" text-anchor="middle">${escapeXml(caption2)}</text>`);
  parts.push(`<text id="caption-3" x="${W / 2}" y="${f(cy + 42)}" text-anchor="middle">${escapeXml(caption3)}</text>`);
  const small: string[] = [`Density = flux in a bin / its width in ${unit}, normalised to a peak of 1; the bins sum to 1 over the plotted range.`];
  if (bins.note !== undefined) small.push(bins.note);
  parts.push(`<text id="note" x="${W / 2}" y="${f(cy + 62)}" text-anchor="middle" font-size="11" fill="#555555">${escapeXml(small.join(' '))}</text>`);
  const warnings = Array.isArray(result.warnings) ? result.warnings.map((w) => str(obj(w).code)).filter((c): c is string => c !== undefined) : [];
  if (warnings.length > 0) {
    parts.push(`<text id="warnings" x="${W / 2}" y="${f(cy + 78)}" text-anchor="middle" font-size="11" fill="#9b2c2c">${escapeXml(`Warnings: ${warnings.slice(0, 6).join(', ')} (see the JSON reply)`)}</text>`);
  }
  parts.push(`</svg>`);
  return parts.join('\n') + '\n';
}
