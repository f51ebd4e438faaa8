/** POST /v1/radii: characteristic radii of a Kerr black hole (Bardeen, Press & Teukolsky 1972). */
import type { FastifyInstance } from 'fastify';
import { Type, type Static } from '@sinclair/typebox';
import { C, G, GM_SUN, HBAR, K_B } from '../physics/constants.js';
import * as kerr from '../physics/kerr.js';
import { registerCaseRoute, type Warning } from '../server/cases.js';
import type { Config } from '../server/config.js';
import { body as readBody } from '../server/inputs.js';
import { dimensional, dimensionless, radius } from '../server/outputs.js';
import { Body, Provenance, QuantityOut, ScalarOut, UncertaintyMethod } from '../server/schemas.js';

export const RadiiCase = Type.Object(
  {
    body: Body,
    uncertainty_method: Type.Optional(UncertaintyMethod),
  },
  { additionalProperties: false, description: 'One black hole.' },
);
type RadiiCase = Static<typeof RadiiCase>;

const R = (what: string) => QuantityOut(what, 'm', true);
const Pair = (what: string, unitOut: (d: string) => ReturnType<typeof R> | ReturnType<typeof ScalarOut>) =>
  Type.Object({
    prograde: unitOut(`${what}, prograde orbit (co-rotating with the hole when spin > 0).`),
    retrograde: unitOut(`${what}, retrograde orbit (counter-rotating when spin > 0).`),
  });

const RadiiResult = Type.Object({
  gm: QuantityOut('Mass parameter GM.', 'm3.s-2'),
  mass: QuantityOut('Mass, GM/G (CODATA 2018 G).', 'kg'),
  mass_solar: ScalarOut('Mass in nominal solar masses, GM / GM_sun (IAU 2015 B3).'),
  spin: ScalarOut('Dimensionless spin a*.'),
  rg: R('Gravitational radius GM/c^2.'),
  rs: R('Schwarzschild radius 2GM/c^2.'),
  horizon: Type.Object({ outer: R('Outer (event) horizon r+ = rg (1 + sqrt(1 - a*^2)).'), inner: R('Inner (Cauchy) horizon r-.') }),
  ergosphere: Type.Object({ equatorial: R('Static limit in the equatorial plane, 2 rg.') }),
  photon_orbit: Pair('Circular photon orbit radius', R),
  marginally_bound: Pair('Marginally bound circular orbit radius', R),
  isco: Pair('Innermost stable circular orbit radius', R),
  efficiency: Pair('Radiative efficiency 1 - E_isco of a thin disk', ScalarOut),
  horizon_angular_velocity: QuantityOut('Angular velocity of the horizon, Omega_H = a* c^3 / (2 GM (r+/rg)).', 'rad.s-1'),
  surface_gravity: QuantityOut('Surface gravity of the horizon.', 'm.s-2'),
  hawking_temperature: QuantityOut('Hawking temperature of the horizon.', 'K'),
  ...Provenance,
});

const REFS = {
  bpt: 'Bardeen, Press & Teukolsky 1972, ApJ 178, 347',
  hawking: 'Hawking 1975, Commun. Math. Phys. 43, 199',
};

export async function radiiRoutes(app: FastifyInstance, opts: { config: Config }): Promise<void> {
  registerCaseRoute<RadiiCase>(app, opts.config, {
    url: '/v1/radii',
    summary: 'Characteristic radii of a Kerr black hole',
    description:
      'Gravitational and Schwarzschild radii, horizons, equatorial ergosphere, and the photon, marginally bound and innermost stable circular orbits ' +
      'for both orbit directions, with the thin-disk radiative efficiency and the horizon angular velocity, surface gravity and Hawking temperature. ' +
      'Prograde means the orbit co-rotates with the hole for spin > 0; a negative spin swaps the two columns. Radii in m, with their value in rg.',
    tags: ['radii'],
    caseSchema: RadiiCase,
    resultSchema: RadiiResult,
    prepare: (input) => {
      const b = readBody(input.body, '/body');
      return {
        vars: [
          { name: b.gmPointer, value: b.gm.value, sigma: b.gm.sigma, lo: 0, hi: Infinity },
          { name: b.spinPointer, value: b.spin.value, sigma: b.spin.sigma, lo: -1, hi: 1, loClosed: true, hiClosed: true },
        ],
        method: input.uncertainty_method,
        compute: radiiAt,
        shape: (get, nominal) => {
          const rgM = nominal.rg;
          const r = (k: string) => radius(get(k), rgM);
          return {
            gm: dimensional(get('gm'), 'm3.s-2'),
            mass: dimensional(get('mass'), 'kg'),
            mass_solar: dimensionless(get('mass_solar')),
            spin: dimensionless(get('spin')),
            rg: r('rg'),
            rs: r('rs'),
            horizon: { outer: r('horizon_outer'), inner: r('horizon_inner') },
            ergosphere: { equatorial: r('ergosphere_equatorial') },
            photon_orbit: { prograde: r('photon_pro'), retrograde: r('photon_retro') },
            marginally_bound: { prograde: r('mb_pro'), retrograde: r('mb_retro') },
            isco: { prograde: r('isco_pro'), retrograde: r('isco_retro') },
            efficiency: { prograde: dimensionless(get('eff_pro')), retrograde: dimensionless(get('eff_retro')) },
            horizon_angular_velocity: dimensional(get('omega_h'), 'rad.s-1'),
            surface_gravity: dimensional(get('kappa'), 'm.s-2'),
            hawking_temperature: dimensional(get('t_hawking'), 'K'),
          };
        },
        warnings: () => radiiWarnings(b.spin.value, b.preset),
        model: b.spin.value !== 0 || b.spin.sigma > 0 ? 'kerr' : 'schwarzschild',
        references: [REFS.bpt, REFS.hawking],
      };
    },
  });
}

/** x = [GM (m^3 s^-2), a*]: radii in m, Omega_H in rad/s, kappa in m/s^2, T in K. */
function radiiAt(x: readonly number[]): Record<string, number> {
  const [gm, a] = x;
  const rg = gm / (C * C); // GM/c^2, m
  return {
    gm,
    mass: gm / G,
    mass_solar: gm / GM_SUN,
    spin: a,
    rg,
    rs: 2 * rg,
    horizon_outer: rg * kerr.horizonOuter(a),
    horizon_inner: rg * kerr.horizonInner(a),
    ergosphere_equatorial: rg * kerr.ergosphereEquatorial(a),
    // Prograde orbits go round in the sense of positive spin (BPT72 eqs. 2.18, 2.19, 2.21).
    photon_pro: rg * kerr.photonOrbit(a),
    photon_retro: rg * kerr.photonOrbit(-a),
    mb_pro: rg * kerr.marginallyBound(a),
    mb_retro: rg * kerr.marginallyBound(-a),
    isco_pro: rg * kerr.isco(a),
    isco_retro: rg * kerr.isco(-a),
    eff_pro: kerr.efficiency(a),
    eff_retro: kerr.efficiency(-a),
    // Omega_H in units of c^3/GM, kappa in units of c^4/GM (BPT72; Hawking 1975).
    omega_h: (kerr.horizonAngularVelocity(a) * C * C * C) / gm,
    kappa: (kerr.surfaceGravity(a) * C * C * C * C) / gm,
    t_hawking: kerr.hawkingTemperature(a, gm, { c: C, hbar: HBAR, kB: K_B }),
  };
}

function radiiWarnings(spin: number, preset: string | undefined): Warning[] {
  const w: Warning[] = [];
  if (preset) {
    w.push({ code: 'not-a-black-hole', message: `the ${preset} is not a black hole: these are the formal radii of a black hole of the same mass` });
  }
  if (Math.abs(spin) === 1) {
    w.push({ code: 'extremal-spin', message: 'an extremal hole (|a*| = 1): horizon, photon orbit, marginally bound orbit and prograde ISCO coincide at r = rg in Boyer-Lindquist coordinates, and the Hawking temperature is zero' });
  } else if (Math.abs(spin) > 0.998) {
    w.push({ code: 'spin-above-thorne-limit', message: '|a*| > 0.998, above the equilibrium spin of a hole spun up by a thin disk (Thorne 1974, ApJ 191, 507)' });
  }
  return w;
}
