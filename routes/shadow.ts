/**
 * POST /v1/shadow: the shadow of a Kerr black hole seen by a distant observer: its outline in
 * Bardeen's celestial coordinates, its horizontal and vertical diameters (rg and m) and, given a
 * distance, its angular size; also as an SVG figure (Accept: image/svg+xml).
 *
 * All the physics is in ../physics/shadow.ts (in rg); this module reads the case, declares the
 * uncertain inputs with their physical domains, and shapes the reply. Uncertainties propagate to
 * the scalar outputs; the outline is drawn at the nominal inputs.
 */
import type { FastifyInstance } from 'fastify';
import { Type, type Static } from '@sinclair/typebox';
import { C, G, GM_SUN } from '../physics/constants.js';
import { PhysicsDomainError } from '../physics/errors.js';
import { shadowEdges, shadowOutline } from '../physics/shadow.js';
import type { Measured, Outputs, Variable } from '../physics/uncertainty.js';
import { registerCaseRoute, type Prepared, type Warning } from '../server/cases.js';
import type { Config } from '../server/config.js';
import { fail, body as readBody, length, quantity } from '../server/inputs.js';
import { dimensional, dimensionless, radius } from '../server/outputs.js';
import { Body, Provenance, Quantity, QuantityOut, ScalarOut, UncertaintyMethod } from '../server/schemas.js';

// ---------------------------------------------------------------------------
// Schemas

const ANGLE_UNITS = ['rad', 'deg', 'arcmin', 'arcsec', 'mas'] as const;
const DISTANCE_UNITS = ['m', 'km', 'AU', 'pc', 'kpc', 'Mpc', 'rg', 'rs'] as const;
/** Default and largest number of outline points. */
export const POINTS_DEFAULT = 256;
export const POINTS_MAX = 4096;
/** Micro-arcseconds per radian. */
const UAS_PER_RAD = 648000e6 / Math.PI;
/** Closest distance (rg) for which an angular size is given; below DISTANT_FLAG it is flagged. */
const DISTANCE_MIN_RG = 100;
const DISTANT_FLAG_RG = 1000;
const SQRT27 = 3 * Math.sqrt(3);

export const ShadowCase = Type.Object(
  {
    body: Body,
    inclination: Quantity(
      "Inclination i of the observer's line of sight to the hole's spin axis, 0..pi (0..180 deg): 0 on the axis (pole-on), pi/2 (90 deg) in the equatorial plane (edge-on). i and pi - i give the same outline.",
      'rad',
      ANGLE_UNITS,
    ),
    distance: Type.Optional(
      Quantity('Distance from the observer to the hole, for the angular size (or in rg = GM/c^2, rs = 2GM/c^2; at least 100 rg).', 'm', DISTANCE_UNITS, { positive: true }),
    ),
    points: Type.Optional(
      Type.Integer({ minimum: 8, maximum: POINTS_MAX, description: `Number of outline points (dimensionless count), 8 to ${POINTS_MAX}; default ${POINTS_DEFAULT}.` }),
    ),
    uncertainty_method: Type.Optional(UncertaintyMethod),
  },
  { additionalProperties: false, description: 'A Kerr black hole and a distant observer.' },
);
type ShadowCase = Static<typeof ShadowCase>;

const R = (what: string) => QuantityOut(what, 'm', true);

const AngleOut = (description: string) =>
  Type.Object(
    {
      ...QuantityOut(description, 'rad').properties,
      uas: Type.Number({ description: 'The value in microarcseconds (nominal; the uncertainty scales by the same factor).' }),
    },
    { description },
  );

const ShadowResult = Type.Object({
  outline: Type.Array(
    Type.Object(
      {
        alpha: Type.Number({ description: "Bardeen's celestial coordinate alpha = -xi/sin i, perpendicular to the projected spin axis, in rg (GM/c^2)." }),
        beta: Type.Number({ description: "Bardeen's celestial coordinate beta, along the projected spin axis, in rg (GM/c^2)." }),
      },
      { description: 'A point of the outline.' },
    ),
    {
      description:
        'The shadow outline, counter-clockwise from its alpha_max edge, in rg (Bardeen 1973 celestial coordinates; for spin > 0 the flattened prograde edge is at negative alpha). ' +
        'Computed at the nominal inputs: uncertainties apply to the scalar outputs only.',
    },
  ),
  diameter: Type.Object(
    {
      horizontal: R('Horizontal diameter alpha_max - alpha_min (across the projected spin axis).'),
      vertical: R('Vertical diameter 2 beta_max (along the projected spin axis).'),
    },
    { description: 'Diameters of the shadow, m (with their nominal value in rg).' },
  ),
  extent_rg: Type.Object(
    {
      horizontal: ScalarOut('Horizontal diameter alpha_max - alpha_min, in rg (dimensionless; uncertainty from spin and inclination).'),
      vertical: ScalarOut('Vertical diameter 2 beta_max, in rg (dimensionless; uncertainty from spin and inclination).'),
      alpha_min: ScalarOut('Smallest alpha of the outline (the prograde edge for spin > 0), in rg.'),
      alpha_max: ScalarOut('Largest alpha of the outline, in rg.'),
      center_offset: ScalarOut('(alpha_min + alpha_max)/2: displacement of the shadow centre from the direction of the hole along alpha, in rg.'),
    },
    { description: 'The shadow extent in units of rg = GM/c^2.' },
  ),
  center_offset: R('Displacement (alpha_min + alpha_max)/2 of the shadow centre along alpha.'),
  schwarzschild_diameter: R('Diameter 2 sqrt(27) GM/c^2 of the shadow of a non-rotating hole of the same mass, for reference.'),
  angular_diameter: Type.Optional(
    Type.Object(
      {
        horizontal: AngleOut('Angular horizontal diameter, diameter.horizontal / distance.'),
        vertical: AngleOut('Angular vertical diameter, diameter.vertical / distance.'),
      },
      { description: 'Present when distance is given: the angular diameters for a distant observer (small angles), rad and microarcseconds.' },
    ),
  ),
  mass: QuantityOut('Mass of the hole, GM/G (CODATA 2018 G).', 'kg'),
  mass_solar: ScalarOut('Mass in nominal solar masses, GM / GM_sun (IAU 2015 B3), dimensionless.'),
  spin: ScalarOut('Dimensionless spin a* used (signed), dimensionless.'),
  inclination: Type.Object(
    {
      ...QuantityOut('Inclination of the line of sight to the spin axis.', 'rad').properties,
      deg: Type.Number({ description: 'The value in degrees (nominal).' }),
    },
    { description: 'Inclination of the line of sight to the spin axis, rad and deg.' },
  ),
  ...Provenance,
});

const REFS = {
  bardeen: 'Bardeen 1973, in Black Holes (Les Houches 1972), eds. DeWitt & DeWitt, p. 215 (celestial coordinates and the Kerr shadow)',
  chandra: 'Chandrasekhar 1983, The Mathematical Theory of Black Holes, section 63 (spherical photon orbits)',
  teo: 'Teo 2003, Gen. Relativ. Gravit. 35, 1909 (spherical photon orbits)',
};

// ---------------------------------------------------------------------------

function prepareShadow(input: ShadowCase): Prepared {
  const vars: Variable[] = [];
  const b = readBody(input.body, '/body');
  const add = (v: Variable) => vars.push(v) - 1;
  const iGm = add({ name: b.gmPointer, value: b.gm.value, sigma: b.gm.sigma, lo: 0, hi: Infinity });
  const iA = add({ name: b.spinPointer, value: b.spin.value, sigma: b.spin.sigma, lo: -1, hi: 1, loClosed: true, hiClosed: true });
  const inc = quantity(input.inclination, '/inclination', 'angle');
  if (!Number.isFinite(inc.value) || !Number.isFinite(inc.sigma)) fail('/inclination', `gives ${inc.value} rad, outside the representable range`);
  if (!(inc.value >= 0 && inc.value <= Math.PI)) fail('/inclination', `must lie in [0, pi] rad = [0, 180] deg (angle from the spin axis); got ${inc.value} rad`);
  if (!(inc.sigma <= Math.PI)) fail('/inclination/uncertainty', 'must be <= pi rad (the inclination is confined to [0, pi])');
  const iI = add({ name: '/inclination', value: inc.value, sigma: inc.sigma, lo: 0, hi: Math.PI, loClosed: true, hiClosed: true });
  let iD = -1;
  let dUnit: 'm' | 'rg' = 'm';
  if (input.distance !== undefined) {
    const l = length(input.distance, '/distance');
    const d = l.relative === 'rs' ? { value: 2 * l.value, sigma: 2 * l.sigma } : { value: l.value, sigma: l.sigma };
    dUnit = l.relative ? 'rg' : 'm';
    if (!Number.isFinite(d.value) || !Number.isFinite(d.sigma)) fail('/distance', `gives ${d.value} ${dUnit}, outside the representable range`);
    iD = add({ name: '/distance', value: d.value, sigma: d.sigma, lo: 0, hi: Infinity });
  }
  const points = input.points ?? POINTS_DEFAULT;
  const uncertain = vars.some((v) => v.sigma > 0);

  const compute = (x: readonly number[]): Outputs => {
    const gm = x[iGm];
    const a = x[iA];
    const i = x[iI];
    const rg = gm / C / C; // GM/c^2, m
    const e = shadowEdges(a, i); // Bardeen 1973; Chandrasekhar 1983 section 63, rg
    const h = e.alphaMax - e.alphaMin; // horizontal diameter, rg
    const v = 2 * e.betaMax; // vertical diameter (the outline is symmetric in beta), rg
    const off = (e.alphaMin + e.alphaMax) / 2; // centre displacement along alpha, rg
    const out: Outputs = {
      rg,
      h,
      v,
      amin: e.alphaMin,
      amax: e.alphaMax,
      off,
      h_m: h * rg,
      v_m: v * rg,
      off_m: off * rg,
      schw_m: 2 * SQRT27 * rg, // 2 sqrt(27) GM/c^2 (Synge 1966; Bardeen 1973), m
      mass: gm / G, // kg, through G (CODATA 2018)
      mass_solar: gm / GM_SUN, // nominal solar masses (IAU 2015 B3)
      spin: a,
      inc: i,
    };
    if (iD >= 0) {
      const dRg = dUnit === 'rg' ? x[iD] : x[iD] / rg; // distance in rg
      if (!(dRg >= DISTANCE_MIN_RG)) {
        throw new PhysicsDomainError(
          `a distance of ${dRg} GM/c^2 is too close for the angular size of a distant observer`,
          `distance >= ${DISTANCE_MIN_RG} GM/c^2 = ${DISTANCE_MIN_RG * rg} m`,
          '/distance',
        );
      }
      out.d_rg = dRg;
      // angle = size / distance for a distant observer (Bardeen 1973: alpha, beta are impact parameters at infinity), rad
      out.ang_h = h / dRg;
      out.ang_v = v / dRg;
    }
    return out;
  };

  const angle = (m: Measured) => ({ ...dimensional(m, 'rad'), uas: m.value * UAS_PER_RAD });
  return {
    vars,
    method: input.uncertainty_method,
    compute,
    shape: (get, nominal) => {
      const outline = shadowOutline(b.spin.value, inc.value, points).map((p) => ({ alpha: p.alpha, beta: p.beta }));
      const rg = nominal.rg;
      const incM = get('inc');
      const reply: Record<string, unknown> = {
        outline,
        diameter: { horizontal: radius(get('h_m'), rg), vertical: radius(get('v_m'), rg) },
        extent_rg: {
          horizontal: dimensionless(get('h')),
          vertical: dimensionless(get('v')),
          alpha_min: dimensionless(get('amin')),
          alpha_max: dimensionless(get('amax')),
          center_offset: dimensionless(get('off')),
        },
        center_offset: radius(get('off_m'), rg),
        schwarzschild_diameter: radius(get('schw_m'), rg),
      };
      if (iD >= 0) reply.angular_diameter = { horizontal: angle(get('ang_h')), vertical: angle(get('ang_v')) };
      reply.mass = dimensional(get('mass'), 'kg');
      reply.mass_solar = dimensionless(get('mass_solar'));
      reply.spin = dimensionless(get('spin'));
      reply.inclination = { ...dimensional(incM, 'rad'), deg: (incM.value * 180) / Math.PI };
      return reply;
    },
    warnings: (nominal) => {
      const w: Warning[] = [];
      if (uncertain) {
        w.push({ code: 'outline-nominal', message: 'the outline points are computed at the nominal inputs; the uncertainties apply to the diameters, extents and angular sizes' });
      }
      if (b.preset) {
        w.push({ code: 'not-a-black-hole', message: `the ${b.preset} is not a black hole: this is the shadow a black hole of the same mass would cast` });
      }
      if (Math.abs(b.spin.value) === 1) {
        w.push({
          code: 'extremal-spin',
          message: 'an extremal hole (|a*| = 1): seen from more than about 47 deg off the axis, the flattened edge of the outline is a straight segment (the photon orbits that pile up at r = rg)',
        });
      }
      if (iD >= 0 && nominal.d_rg < DISTANT_FLAG_RG) {
        w.push({
          code: 'distant-observer-approximation',
          message: `the observer is ${nominal.d_rg.toPrecision(3)} GM/c^2 away: the angular size assumes a distant observer, with relative errors of order GM/(c^2 distance)`,
        });
      }
      return w;
    },
    model: b.spin.value !== 0 || b.spin.sigma > 0 ? 'kerr' : 'schwarzschild',
    references: [REFS.bardeen, REFS.chandra, REFS.teo],
  };
}

// ---------------------------------------------------------------------------
// SVG figure

function num(x: unknown): number {
  if (typeof x === 'number') return x;
  if (x && typeof x === 'object' && typeof (x as { value?: unknown }).value === 'number') return (x as { value: number }).value;
  return NaN;
}

function escapeXml(s: string): string {
  return s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');
}

function fmt(x: number, digits = 4): string {
  if (!Number.isFinite(x)) return '?';
  return Math.abs(x) >= 1e5 || (Math.abs(x) < 1e-3 && x !== 0) ? x.toExponential(digits - 1).replace(/\.?0+e/, 'e') : Number(x.toPrecision(digits)).toString();
}

/** A labelled figure of the outline (our own layout): axes in rg, the outline, the Schwarzschild circle, a caption. */
export function shadowSvg(result: Record<string, unknown>): string {
  const outline = (result.outline as Array<{ alpha: number; beta: number }>) ?? [];
  const W = 640;
  const H = 720;
  const plot = { x: 80, y: 50, size: 520 };
  let reach = SQRT27;
  for (const p of outline) reach = Math.max(reach, Math.abs(p.alpha), Math.abs(p.beta));
  const step = reach <= 4 ? 1 : reach <= 9 ? 2 : 5;
  const L = Math.ceil((reach * 1.08) / step) * step; // half-range of both axes, rg
  const sx = (a: number) => plot.x + ((a + L) / (2 * L)) * plot.size;
  const sy = (b: number) => plot.y + ((L - b) / (2 * L)) * plot.size;
  const f = (v: number) => v.toFixed(2);
  const parts: string[] = [];
  parts.push(`<?xml version="1.0" encoding="UTF-8"?>`);
  parts.push(`<svg xmlns="http://www.w3.org/2000/svg" width="${W}" height="${H}" viewBox="0 0 ${W} ${H}" font-family="sans-serif" font-size="13">`);
  parts.push(`<title>Black-hole shadow outline in Bardeen celestial coordinates</title>`);
  parts.push(`<rect x="0" y="0" width="${W}" height="${H}" fill="#ffffff"/>`);
  // grid and ticks
  parts.push(`<g id="grid" stroke="#e3e3e3" stroke-width="1">`);
  for (let v = -L; v <= L + 1e-9; v += step) {
    parts.push(`<line x1="${f(sx(v))}" y1="${f(plot.y)}" x2="${f(sx(v))}" y2="${f(plot.y + plot.size)}"/>`);
    parts.push(`<line x1="${f(plot.x)}" y1="${f(sy(v))}" x2="${f(plot.x + plot.size)}" y2="${f(sy(v))}"/>`);
  }
  parts.push(`</g>`);
  parts.push(`<rect x="${plot.x}" y="${plot.y}" width="${plot.size}" height="${plot.size}" fill="none" stroke="#555555" stroke-width="1"/>`);
  parts.push(`<g id="axes" stroke="#888888" stroke-width="1">`);
  parts.push(`<line x1="${f(sx(-L))}" y1="${f(sy(0))}" x2="${f(sx(L))}" y2="${f(sy(0))}"/>`);
  parts.push(`<line x1="${f(sx(0))}" y1="${f(sy(-L))}" x2="${f(sx(0))}" y2="${f(sy(L))}"/>`);
  parts.push(`</g>`);
  parts.push(`<g id="tick-labels" fill="#333333" font-size="11">`);
  for (let v = -L; v <= L + 1e-9; v += step) {
    parts.push(`<text x="${f(sx(v))}" y="${f(plot.y + plot.size + 16)}" text-anchor="middle">${fmt(v)}</text>`);
    parts.push(`<text x="${f(plot.x - 8)}" y="${f(sy(v) + 4)}" text-anchor="end">${fmt(v)}</text>`);
  }
  parts.push(`</g>`);
  parts.push(`<text x="${f(plot.x + plot.size / 2)}" y="${f(plot.y + plot.size + 36)}" text-anchor="middle">α [GM/c²] (across the projected spin axis)</text>`);
  parts.push(
    `<text x="${f(plot.x - 50)}" y="${f(plot.y + plot.size / 2)}" text-anchor="middle" transform="rotate(-90 ${f(plot.x - 50)} ${f(plot.y + plot.size / 2)})">β [GM/c²] (along the projected spin axis)</text>`,
  );
  // reference circle and outline
  const rr = (SQRT27 / (2 * L)) * plot.size;
  parts.push(`<circle id="schwarzschild" cx="${f(sx(0))}" cy="${f(sy(0))}" r="${f(rr)}" fill="none" stroke="#2b6cb0" stroke-width="1.5" stroke-dasharray="6 4"/>`);
  if (outline.length > 0) {
    const d = outline.map((p, k) => `${k === 0 ? 'M' : 'L'}${f(sx(p.alpha))} ${f(sy(p.beta))}`).join(' ') + ' Z';
    parts.push(`<path id="outline" d="${d}" fill="#1a1a1a" fill-opacity="0.85" stroke="#000000" stroke-width="1.5"/>`);
  }
  // legend
  parts.push(`<g id="legend" font-size="12">`);
  parts.push(`<line x1="${plot.x + 12}" y1="${plot.y + 16}" x2="${plot.x + 40}" y2="${plot.y + 16}" stroke="#2b6cb0" stroke-width="1.5" stroke-dasharray="6 4"/>`);
  parts.push(`<text x="${plot.x + 46}" y="${plot.y + 20}">non-rotating hole, radius √27 GM/c²</text>`);
  parts.push(`<rect x="${plot.x + 12}" y="${plot.y + 28}" width="28" height="12" fill="#1a1a1a" fill-opacity="0.85"/>`);
  parts.push(`<text x="${plot.x + 46}" y="${plot.y + 39}">shadow</text>`);
  parts.push(`</g>`);
  // title and caption
  const mass = num(result.mass_solar);
  const spin = num(result.spin);
  const incDeg = num((result.inclination as { deg?: number } | undefined)?.deg);
  const diameter = result.diameter as { horizontal?: { rg?: number }; vertical?: { rg?: number } } | undefined;
  const ang = result.angular_diameter as { horizontal?: { uas?: number }; vertical?: { uas?: number } } | undefined;
  parts.push(`<text x="${W / 2}" y="30" text-anchor="middle" font-size="16" font-weight="bold">Shadow of a Kerr black hole (Bardeen 1973 celestial coordinates)</text>`);
  const caption1 = `Mass ${fmt(mass)} solar masses · spin a* = ${fmt(spin)} · inclination ${fmt(incDeg)}° from the spin axis`;
  let caption2 = `Diameter ${fmt(num(diameter?.horizontal?.rg))} GM/c² across, ${fmt(num(diameter?.vertical?.rg))} GM/c² along the spin axis`;
  if (ang) caption2 += ` (${fmt(num(ang.horizontal?.uas))} × ${fmt(num(ang.vertical?.uas))} µas)`;
  parts.push(`<text id="caption" x="${W / 2}" y="${plot.y + plot.size + 70}" text-anchor="middle">${escapeXml(caption1)}</text>`);
  parts.push(`<text x="${W / 2}" y="${plot.y + plot.size + 92}" text-anchor="middle">${escapeXml(caption2)}</text>`);
  parts.push(`<text x="${W / 2}" y="${plot.y + plot.size + 114}" text-anchor="middle" font-size="11" fill="#555555">Outline at the nominal inputs; for spin &gt; 0 the co-rotating (flattened) edge lies at negative α.</text>`);
  parts.push(`</svg>`);
  return parts.join('\n') + '\n';
}

// ---------------------------------------------------------------------------

export async function shadowRoutes(app: FastifyInstance, opts: { config: Config }): Promise<void> {
  registerCaseRoute<ShadowCase>(app, opts.config, {
    url: '/v1/shadow',
    summary: 'Shadow of a Kerr black hole: outline, diameters, angular size, SVG figure',
    description:
      'The apparent boundary of the region of captured photons of a Kerr black hole seen by a distant observer at inclination i from the spin axis, ' +
      'traced by the spherical photon orbits (Bardeen 1973; Chandrasekhar 1983, section 63) in the celestial coordinates alpha = -xi/sin i, ' +
      'beta = +-sqrt(eta + a^2 cos^2 i - xi^2 cot^2 i), in rg = GM/c^2: the outline (`points` points, default 256, at most 4096), the horizontal and vertical diameters ' +
      '(m and rg; 2 sqrt(27) rg for a non-rotating hole), the displacement of the centre, and with `distance` the angular diameters (rad, microarcseconds). ' +
      'For spin > 0 the flattened (co-rotating) edge is at negative alpha; a negative spin mirrors the outline. The pole-on (i = 0) and non-rotating limits are exact circles. ' +
      'Uncertainties of mass, spin, inclination and distance propagate to the scalar outputs; the outline is drawn at the nominal inputs. ' +
      'With `Accept: image/svg+xml` a single case is answered with an SVG figure of the outline.',
    tags: ['shadow'],
    caseSchema: ShadowCase,
    resultSchema: ShadowResult,
    prepare: (input) => prepareShadow(input),
    renderers: { 'image/svg+xml': shadowSvg },
  });
}
