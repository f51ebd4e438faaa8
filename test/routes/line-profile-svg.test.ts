/**
 * The SVG plot of POST /v1/line-profile (routes/line-profile-svg.ts), called directly with
 * hand-built reply objects: well-formed XML; the step curve read back through the plot area's
 * documented data range (and the tick labels) reproduces the flux densities flux[i] / width[i]
 * normalised to a peak of 1; axis titles by the kind of unit; the rest line; the caption; and
 * degenerate inputs rendering without NaN or Infinity.
 *
 * Demo data are invented: a made-up disk around an imaginary hole in the "Wren-7 system", with an
 * invented line at 5.2 keV. Its profile is the double-horned shape of a single rotating ring,
 * derived here rather than quoted: a ring whose emitters move with line-of-sight velocity
 * s cos(phi), phi uniform, has observed energies E = E0 (1 + s cos phi) (first order), so the
 * share of the ring below E is F(E) = 1/2 + asin((E - E0) / (s E0)) / pi, and a bin holds
 * F(e1) - F(e0). A factor (E/E0)^3 on each bin (our own choice) makes the blue horn the taller.
 */
import { describe, expect, it } from 'vitest';
import { lineProfileSvg } from '../../routes/line-profile-svg.js';
import { checkXml } from '../support/xml.js';

// ---------------------------------------------------------------------------
// Reading the SVG back

const unescape = (s: string) => s.replace(/&lt;/g, '<').replace(/&gt;/g, '>').replace(/&quot;/g, '"').replace(/&amp;/g, '&');

/** The start tag of the element with this id, or undefined. */
function element(svg: string, id: string): string | undefined {
  return new RegExp(`<[A-Za-z]+\\b[^>]*\\bid="${id}"[^>]*>`).exec(svg)?.[0];
}

function attr(tag: string, name: string): string {
  const m = new RegExp(`\\s${name}="([^"]*)"`).exec(tag);
  if (!m) throw new Error(`no ${name} in ${tag.slice(0, 80)}`);
  return unescape(m[1]);
}

/** Text content of the <text> element with this id. */
function textOf(svg: string, id: string): string {
  const m = new RegExp(`<text\\b[^>]*\\bid="${id}"[^>]*>([^<]*)</text>`).exec(svg);
  if (!m) throw new Error(`no text #${id}`);
  return unescape(m[1]);
}

/** Every <text> of the group with this id: position and content. */
function groupTexts(svg: string, id: string): Array<{ x: number; y: number; text: string }> {
  const g = new RegExp(`<g\\b[^>]*\\bid="${id}"[^>]*>([\\s\\S]*?)</g>`).exec(svg);
  if (!g) throw new Error(`no group #${id}`);
  return [...g[1].matchAll(/<text\b([^>]*)>([^<]*)<\/text>/g)].map((m) => ({ x: Number(attr(m[1], 'x')), y: Number(attr(m[1], 'y')), text: unescape(m[2]) }));
}

interface Frame {
  px: number;
  py: number;
  pw: number;
  ph: number;
  x0: number;
  x1: number;
  y0: number;
  y1: number;
  /** Data value to pixel and back. */
  sx: (v: number) => number;
  sy: (d: number) => number;
  vx: (px: number) => number;
  vy: (py: number) => number;
}

/** The axis transform from the plot area's geometry and its documented data attributes. */
function frame(svg: string): Frame {
  const tag = element(svg, 'plot-area');
  if (!tag) throw new Error('no plot area');
  const [px, py, pw, ph] = ['x', 'y', 'width', 'height'].map((k) => Number(attr(tag, k)));
  const [x0, x1, y0, y1] = ['data-x0', 'data-x1', 'data-y0', 'data-y1'].map((k) => Number(attr(tag, k)));
  return {
    px, py, pw, ph, x0, x1, y0, y1,
    sx: (v) => px + ((v - x0) / (x1 - x0)) * pw,
    sy: (d) => py + ph - ((d - y0) / (y1 - y0)) * ph,
    vx: (p) => x0 + ((p - px) / pw) * (x1 - x0),
    vy: (p) => y0 + ((py + ph - p) / ph) * (y1 - y0),
  };
}

interface Step {
  xa: number;
  xb: number;
  y: number;
}

/** The horizontal runs of an absolute M/H/V path, and every vertex. */
function steps(d: string): { runs: Step[]; vertices: Array<[number, number]> } {
  const tokens = [...d.matchAll(/([MHV])\s*([-\d.]+)(?:[\s,]+([-\d.]+))?/g)];
  expect(tokens.map((t) => t[0]).join(' ').replace(/\s+/g, ' ')).toBe(d.trim().replace(/\s+/g, ' ')); // nothing else in the path
  let x = NaN;
  let y = NaN;
  const runs: Step[] = [];
  const vertices: Array<[number, number]> = [];
  for (const t of tokens) {
    if (t[1] === 'M') {
      x = Number(t[2]);
      y = Number(t[3]);
    } else if (t[1] === 'H') {
      const nx = Number(t[2]);
      runs.push({ xa: x, xb: nx, y });
      x = nx;
    } else {
      y = Number(t[2]);
    }
    vertices.push([x, y]);
  }
  return { runs, vertices };
}

/** Level (pixel y) of the curve at pixel x, inside a run. */
function levelAt(runs: Step[], x: number): number {
  const r = runs.find((s) => s.xa < x && x < s.xb);
  if (!r) throw new Error(`no run over x = ${x}`);
  return r.y;
}

/** Expected normalised densities, computed here independently of the renderer. */
function densities(edges: number[], flux: number[]): number[] {
  const d = flux.map((v, i) => v / (edges[i + 1] - edges[i]));
  const peak = Math.max(...d);
  return d.map((v) => v / peak);
}

// ---------------------------------------------------------------------------
// The invented Wren-7 scenario

const E0 = 5.2; // keV, invented rest value
const S = 0.18; // invented projected ring speed / c

const ringCdf = (e: number) => {
  const u = (e - E0) / (S * E0);
  return u <= -1 ? 0 : u >= 1 ? 1 : 0.5 + Math.asin(u) / Math.PI;
};

function ringFlux(edges: number[]): number[] {
  const raw = edges.slice(0, -1).map((e, i) => (ringCdf(edges[i + 1]) - ringCdf(e)) * Math.pow((e + edges[i + 1]) / 2 / E0, 3));
  const sum = raw.reduce((a, b) => a + b, 0);
  return raw.map((v) => v / sum);
}

const linear = (lo: number, hi: number, n: number) => Array.from({ length: n + 1 }, (_, i) => lo + ((hi - lo) * i) / n);
const logarithmic = (lo: number, hi: number, n: number) => Array.from({ length: n + 1 }, (_, i) => lo * Math.pow(hi / lo, i / n));

function wren7(over: Record<string, unknown> = {}): Record<string, unknown> {
  const edges = linear(3.6, 6.6, 60);
  return {
    edges: { value: edges, unit: 'keV' },
    flux: ringFlux(edges),
    fraction_in_range: 0.975,
    g_min: 1 - S,
    g_max: 1 + S,
    line_range: { low: { value: E0 * (1 - S), unit: 'keV' }, high: { value: E0 * (1 + S), unit: 'keV' } },
    rays: 48213,
    accuracy: { level: 'standard', l1_estimate: 0.0031, integrator_rtol: 1e-9 },
    flux_kind: 'photon',
    disk: { r_in: { rg: 7.5 }, r_out: { rg: 380 }, isco: { rg: 3.829 } },
    spin: 0.62,
    inclination: { value: (41 * Math.PI) / 180, unit: 'rad', deg: 41 },
    rest: { value: E0, unit: 'keV' },
    model: 'kerr',
    references: ['(invented scenario, no reference)'],
    ...over,
  };
}

const svg0 = () => lineProfileSvg(wren7());

function render(result: Record<string, unknown>): string {
  const svg = lineProfileSvg(result);
  expect(checkXml(svg)).toEqual([]);
  expect(svg.startsWith('<?xml version="1.0" encoding="UTF-8"?>\n<svg xmlns="http://www.w3.org/2000/svg"')).toBe(true);
  expect(svg).not.toMatch(/NaN|Infinity|undefined|\[object/);
  return svg;
}

// ---------------------------------------------------------------------------

describe('lineProfileSvg', () => {
  it('the step curve reproduces flux[i] / width[i], normalised to a peak of 1, through the plot area data range', () => {
    const r = wren7();
    const svg = render(r);
    const F = frame(svg);
    const edges = (r.edges as { value: number[] }).value;
    expect(F.x0).toBe(edges[0]);
    expect(F.x1).toBe(edges[edges.length - 1]);
    expect(F.y0).toBe(0);
    expect(F.y1).toBeGreaterThanOrEqual(1);
    const tag = element(svg, 'profile');
    expect(tag).toBeDefined();
    const { runs, vertices } = steps(attr(tag!, 'd'));
    const want = densities(edges, r.flux as number[]);
    // pixels are printed to 0.01: a level is good to 0.005 px
    const tolD = (0.006 / F.ph) * (F.y1 - F.y0);
    for (let i = 0; i < want.length; i++) {
      const cx = (F.sx(edges[i]) + F.sx(edges[i + 1])) / 2;
      expect(Math.abs(F.vy(levelAt(runs, cx)) - want[i]), `bin ${i}`).toBeLessThan(tolD);
    }
    // every vertex sits on a bin edge, inside the plot area; the curve starts and ends on the baseline
    const tolX = (0.006 / F.pw) * (F.x1 - F.x0);
    for (const [x, y] of vertices) {
      expect(Math.min(...edges.map((e) => Math.abs(F.vx(x) - e)))).toBeLessThan(tolX);
      expect(y).toBeGreaterThanOrEqual(F.py - 0.01);
      expect(y).toBeLessThanOrEqual(F.py + F.ph + 0.01);
    }
    expect(vertices[0]).toEqual([Number(F.sx(edges[0]).toFixed(2)), Number((F.py + F.ph).toFixed(2))]);
    expect(vertices[vertices.length - 1][1]).toBeCloseTo(F.py + F.ph, 2);
    // the shape: zero outside the ring's energies, the blue horn (E0 (1 + S) = 6.136 keV) is the peak
    const top = Math.min(...vertices.map((v) => v[1]));
    expect(F.vy(top)).toBeCloseTo(1, 4);
    const peakRun = runs.find((s) => s.y === top)!;
    expect(F.vx(peakRun.xa)).toBeLessThan(E0 * (1 + S));
    expect(F.vx(peakRun.xb)).toBeGreaterThan(E0 * (1 + S));
    expect(F.vy(levelAt(runs, F.sx(3.7)))).toBe(0);
    expect(F.vy(levelAt(runs, F.sx(6.5)))).toBe(0);
    // the red horn (E0 (1 - S) = 4.264 keV) is a local maximum below the blue one
    const red = F.vy(levelAt(runs, F.sx(E0 * (1 - S))));
    expect(red).toBeGreaterThan(F.vy(levelAt(runs, F.sx(E0))));
    expect(red).toBeLessThan(0.9);
  });

  it('x tick labels are round values at the positions the data range gives; y ticks run 0 to 1', () => {
    const svg = render(wren7());
    const F = frame(svg);
    const xt = groupTexts(svg, 'x-ticks');
    expect(xt.length).toBeGreaterThanOrEqual(3);
    const values = xt.map((t) => Number(t.text));
    for (const [k, t] of xt.entries()) {
      expect(Number.isFinite(values[k])).toBe(true);
      expect(Math.abs(t.x - F.sx(values[k]))).toBeLessThan(0.011);
      expect(values[k]).toBeGreaterThanOrEqual(F.x0);
      expect(values[k]).toBeLessThanOrEqual(F.x1);
    }
    const step = values[1] - values[0];
    for (let k = 1; k < values.length; k++) expect(values[k] - values[k - 1]).toBeCloseTo(step, 9);
    const mant = step / Math.pow(10, Math.floor(Math.log10(step) + 1e-9));
    expect([1, 2, 5].some((m) => Math.abs(mant - m) < 1e-9)).toBe(true);
    // 3.6 .. 6.6 keV: 0.5 keV steps from 4 to 6.5
    expect(xt.map((t) => t.text)).toEqual(['4.0', '4.5', '5.0', '5.5', '6.0', '6.5']);
    const yt = groupTexts(svg, 'y-ticks');
    expect(yt.map((t) => Number(t.text))).toEqual([0, 0.2, 0.4, 0.6, 0.8, 1]);
    for (const t of yt) expect(Math.abs(t.y - 4 - F.sy(Number(t.text)))).toBeLessThan(0.011);
    // the peak of the curve is level with the "1" tick
    const { vertices } = steps(attr(element(svg, 'profile')!, 'd'));
    expect(Math.min(...vertices.map((v) => v[1]))).toBeCloseTo(yt[yt.length - 1].y - 4, 2);
  });

  it('axis titles, title and caption carry the inputs', () => {
    const svg = render(wren7());
    expect(textOf(svg, 'x-label')).toBe('Observed photon energy [keV]');
    expect(textOf(svg, 'y-label')).toBe('Photon flux density per keV (peak = 1)');
    expect(svg).toMatch(/<title>[^<]*photon flux density[^<]*keV[^<]*<\/title>/);
    const caption = [textOf(svg, 'caption'), textOf(svg, 'caption-2'), textOf(svg, 'caption-3')].join(' | ');
    expect(caption).toContain('a* = 0.62');
    expect(caption).toContain('inclination 41°');
    expect(caption).toContain('r_in = 7.5 rg');
    expect(caption).toContain('r_out = 380 rg');
    expect(caption).toContain('ISCO 3.829 rg');
    expect(caption).toContain('Rest value 5.2 keV');
    expect(caption).toContain('g from 0.82 to 1.18');
    expect(caption).toContain('Accuracy standard (L1 error estimate 0.0031, 48213 rays)');
    expect(caption).toContain('97.5 % of the line lies inside the bins');
    expect(textOf(svg, 'heading')).toContain('rotating (Kerr)');

    const energy = render(wren7({ flux_kind: 'energy', spin: 0, model: 'schwarzschild', inclination: { value: 0.3, unit: 'rad' } }));
    expect(textOf(energy, 'y-label')).toBe('Energy flux density per keV (peak = 1)');
    expect(textOf(energy, 'caption')).toContain('a* = 0 ·');
    expect(textOf(energy, 'caption')).toContain(`inclination ${Number(((0.3 * 180) / Math.PI).toPrecision(4))}°`); // from rad when deg is missing
    expect(textOf(energy, 'heading')).toContain('Schwarzschild');
  });

  it('names the x quantity by the kind of unit: frequency, wavelength', () => {
    const hz = linear(1.0e18, 1.6e18, 30);
    const svg = render(wren7({ edges: { value: hz, unit: 'Hz' }, rest: { value: 1.25e18, unit: 'Hz' }, line_range: {} }));
    expect(textOf(svg, 'x-label')).toBe('Observed frequency [Hz]');
    expect(textOf(svg, 'y-label')).toBe('Photon flux density per Hz (peak = 1)');
    const labels = groupTexts(svg, 'x-ticks');
    expect(labels.map((t) => t.text)).toEqual(['1e18', '1.1e18', '1.2e18', '1.3e18', '1.4e18', '1.5e18', '1.6e18']);
    const F = frame(svg);
    for (const t of labels) expect(Math.abs(t.x - F.sx(Number(t.text)))).toBeLessThan(0.011);
    for (const unit of ['GHz', 'kHz']) expect(textOf(render(wren7({ edges: { value: hz, unit } })), 'x-label')).toBe(`Observed frequency [${unit}]`);

    const aa = render(wren7({ edges: { value: linear(1.9, 2.8, 45), unit: 'Angstrom' }, rest: { value: 2.38, unit: 'Angstrom' } }));
    expect(textOf(aa, 'x-label')).toBe('Observed wavelength [Angstrom]');
    for (const unit of ['nm', 'um', 'm']) expect(textOf(render(wren7({ edges: { value: linear(1, 2, 4), unit } })), 'x-label')).toBe(`Observed wavelength [${unit}]`);
    for (const unit of ['eV', 'J']) expect(textOf(render(wren7({ edges: { value: linear(1, 2, 4), unit } })), 'x-label')).toBe(`Observed photon energy [${unit}]`);
    // a unit that is not spectral still renders, named generically and escaped
    const odd = render(wren7({ edges: { value: linear(1, 2, 4), unit: 'a<b&"c' } }));
    expect(textOf(odd, 'x-label')).toBe('Observed spectral value [a<b&"c]');
  });

  it('the rest line sits at the rest value (converted to the axis unit); it is left out outside the range or for a non-spectral unit', () => {
    const svg = render(wren7());
    const F = frame(svg);
    const rest = element(svg, 'rest');
    expect(rest).toBeDefined();
    expect(Number(attr(rest!, 'x1'))).toBeCloseTo(F.sx(E0), 2);
    expect(attr(rest!, 'x2')).toBe(attr(rest!, 'x1'));
    expect(attr(rest!, 'stroke-dasharray')).not.toBe('');
    expect(Number(attr(rest!, 'y1'))).toBe(F.py);
    expect(Number(attr(rest!, 'y2'))).toBe(F.py + F.ph);
    expect(svg).toMatch(/rest value 5\.2 keV/);
    // an off-centre rest value
    const off = render(wren7({ rest: { value: 4.7, unit: 'keV' } }));
    expect(Number(attr(element(off, 'rest')!, 'x1'))).toBeCloseTo(F.sx(4.7), 2);

    expect(element(render(wren7({ rest: { value: 7.1, unit: 'keV' } })), 'rest')).toBeUndefined();
    // another unit is converted to the axis unit: 5200 eV is 5.2 keV; 5.2 eV lies far outside the range
    expect(Number(attr(element(render(wren7({ rest: { value: 5200, unit: 'eV' } })), 'rest')!, 'x1'))).toBeCloseTo(F.sx(5.2), 2);
    expect(element(render(wren7({ rest: { value: 5.2, unit: 'eV' } })), 'rest')).toBeUndefined();
    // a wavelength: E = h c / lambda, h c = 12.398419843320026 keV Angstrom (CODATA 2018, exact h, c, e)
    expect(Number(attr(element(render(wren7({ rest: { value: 12.398419843320026 / 5.2, unit: 'Angstrom' } })), 'rest')!, 'x1'))).toBeCloseTo(F.sx(5.2), 2);
    // not a spectral unit: no line
    expect(element(render(wren7({ rest: { value: 5.2, unit: 'kg' } })), 'rest')).toBeUndefined();
    expect(element(render(wren7({ rest: undefined })), 'rest')).toBeUndefined();
  });

  it('marks the ends of the line when they fall inside the range', () => {
    const svg = render(wren7());
    const F = frame(svg);
    expect(Number(attr(element(svg, 'line-low')!, 'x1'))).toBeCloseTo(F.sx(E0 * (1 - S)), 2);
    expect(Number(attr(element(svg, 'line-high')!, 'x1'))).toBeCloseTo(F.sx(E0 * (1 + S)), 2);
    const cut = render(wren7({ line_range: { low: { value: 4.264, unit: 'keV' }, high: { value: 6.9, unit: 'keV' } } }));
    expect(element(cut, 'line-low')).toBeDefined();
    expect(element(cut, 'line-high')).toBeUndefined();
  });

  it('logarithmic bins: each bin divided by its own width (a flat-topped line drawn flat)', () => {
    // invented flat-topped line: uniform density between 4 and 6 keV, binned logarithmically over 3 .. 8 keV
    const edges = logarithmic(3, 8, 40);
    const over = (a: number, b: number) => Math.max(0, Math.min(b, 6) - Math.max(a, 4));
    const raw = edges.slice(0, -1).map((e, i) => over(e, edges[i + 1]));
    const sum = raw.reduce((a, b) => a + b, 0);
    const flux = raw.map((v) => v / sum);
    const svg = render(wren7({ edges: { value: edges, unit: 'keV' }, flux }));
    const F = frame(svg);
    const { runs } = steps(attr(element(svg, 'profile')!, 'd'));
    const want = densities(edges, flux);
    for (let i = 0; i < want.length; i++) {
      const cx = (F.sx(edges[i]) + F.sx(edges[i + 1])) / 2;
      expect(Math.abs(F.vy(levelAt(runs, cx)) - want[i]), `bin ${i}`).toBeLessThan(1e-4);
    }
    // bins wholly inside [4, 6] keV are all at the peak: flux per bin grows with width, density does not
    const inside = edges.slice(0, -1).map((e, i) => e >= 4 && edges[i + 1] <= 6);
    expect(inside.filter(Boolean).length).toBeGreaterThan(10);
    for (let i = 0; i < want.length; i++) {
      if (!inside[i]) continue;
      const cx = (F.sx(edges[i]) + F.sx(edges[i + 1])) / 2;
      expect(F.vy(levelAt(runs, cx))).toBeCloseTo(1, 4);
    }
    // and, being equal, they are drawn as one run
    const topRuns = runs.filter((r) => Math.abs(F.vy(r.y) - 1) < 1e-4);
    expect(topRuns).toHaveLength(1);
    expect(F.vx(topRuns[0].xb) - F.vx(topRuns[0].xa)).toBeGreaterThan(1.8);
  });

  it('degenerate inputs render valid SVG without NaN or Infinity', () => {
    // all-zero flux: a flat curve on the baseline and a note
    const zero = render(wren7({ flux: new Array(60).fill(0), fraction_in_range: 0 }));
    const F = frame(zero);
    const { vertices } = steps(attr(element(zero, 'profile')!, 'd'));
    for (const [, y] of vertices) expect(y).toBeCloseTo(F.py + F.ph, 2);
    expect(textOf(zero, 'note')).toMatch(/No line flux/);
    expect(textOf(zero, 'empty')).toMatch(/No line flux/);
    expect(element(svg0(), 'empty')).toBeUndefined();
    expect(textOf(zero, 'caption-3')).toContain('0 % of the line');

    // one bin: a box to the peak
    const one = render(wren7({ edges: { value: [5, 5.5], unit: 'keV' }, flux: [1] }));
    const F1 = frame(one);
    const box = steps(attr(element(one, 'profile')!, 'd'));
    expect(F1.vy(box.runs[0].y)).toBeCloseTo(1, 4);
    expect(F1.vx(box.runs[0].xa)).toBeCloseTo(5, 4);
    expect(F1.vx(box.runs[0].xb)).toBeCloseTo(5.5, 4);
    expect(groupTexts(one, 'x-ticks').length).toBeGreaterThanOrEqual(2);

    // nothing at all
    const empty = render({});
    expect(element(empty, 'profile')).toBeUndefined();
    expect(textOf(empty, 'caption')).toBe('Spin a* = ? · inclination ?° · disk from r_in = ? rg to r_out = ? rg (ISCO ? rg)');
    expect(textOf(empty, 'caption-3')).toContain('Accuracy ? (L1 error estimate ?, ? rays) · ? % of the line');
    expect(textOf(empty, 'x-label')).toBe('Observed spectral value [?]');
    expect(textOf(empty, 'note')).toMatch(/No usable bin edges/);
    expect(textOf(empty, 'empty')).toMatch(/Nothing to plot/);
    expect(textOf(empty, 'y-label')).toBe('Flux density (peak = 1)');

    // malformed values: non-numbers, non-finite numbers, wrong shapes, mismatched lengths, equal edges
    const cases: Array<Record<string, unknown>> = [
      wren7({ flux: [0.5, NaN, Infinity, -1, 'x', null], edges: { value: [1, 2, 3, 4, 5, 6, 7], unit: 'keV' } }),
      wren7({ flux: [0.2, 0.3], edges: { value: [1, 2, 3, 4, 5], unit: 'keV' } }),
      wren7({ flux: [0.2, 0.3, 0.5], edges: { value: [1, 2], unit: 'keV' } }),
      wren7({ edges: { value: [1, 1, 2], unit: 'keV' }, flux: [0.5, 0.5] }),
      wren7({ edges: { value: [1, NaN, 2], unit: 'keV' }, flux: [0.5, 0.5] }),
      wren7({ edges: { value: [-1e308, 1e308], unit: 'keV' }, flux: [1] }),
      wren7({ edges: { value: [1, 1 + 1e-320], unit: 'keV' }, flux: [1] }), // equal in double precision
      wren7({ edges: { value: [1e-310, 2e-310], unit: 'keV' }, flux: [1] }), // density overflows
      wren7({ edges: 'keV', flux: 'x', rest: 5, line_range: null, accuracy: [], disk: { r_in: 3 }, spin: '0.5', inclination: null }),
      wren7({ edges: { value: [6, 5, 4], unit: 'keV' }, flux: [0.25, 0.75] }), // decreasing: drawn reversed
      wren7({ spin: Infinity, fraction_in_range: NaN, g_min: -Infinity, warnings: [{ code: 'line-outside-bins', message: 'x' }, 7] }),
    ];
    for (const c of cases) render(c);
    const rev = render(cases[9]);
    const R = frame(rev);
    expect([R.x0, R.x1]).toEqual([4, 6]);
    const rs = steps(attr(element(rev, 'profile')!, 'd')).runs;
    expect(R.vy(levelAt(rs, R.sx(4.5)))).toBeCloseTo(1, 4); // 0.75 over [4, 5]
    expect(R.vy(levelAt(rs, R.sx(5.5)))).toBeCloseTo(1 / 3, 4);
    expect(textOf(render(cases[10]), 'warnings')).toContain('line-outside-bins');
    expect(textOf(render(cases[1]), 'note')).toMatch(/2 flux values for 4 bins/);
  });

  it('a 10 000-bin profile stays valid and compact, with every bin at its level', () => {
    const edges = linear(3.6, 6.6, 10000);
    const flux = ringFlux(edges);
    const svg = render(wren7({ edges: { value: edges, unit: 'keV' }, flux }));
    expect(svg.length).toBeLessThan(400_000);
    const F = frame(svg);
    const { runs, vertices } = steps(attr(element(svg, 'profile')!, 'd'));
    expect(vertices.length).toBeLessThanOrEqual(2 * 10000 + 2);
    expect(F.vy(Math.min(...vertices.map((v) => v[1])))).toBeCloseTo(1, 4);
    // sampled bins that are wider than the printed precision map back to their density
    const want = densities(edges, flux);
    for (let i = 0; i < 10000; i += 97) {
      const xa = Number(F.sx(edges[i]).toFixed(2));
      const xb = Number(F.sx(edges[i + 1]).toFixed(2));
      if (!(xb > xa)) continue;
      expect(Math.abs(F.vy(levelAt(runs, (xa + xb) / 2)) - want[i]), `bin ${i}`).toBeLessThan((0.006 / F.ph) * F.y1);
    }
  });
});
