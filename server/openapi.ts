/** The fixed parts of the OpenAPI 3.1 document; paths come from the route schemas. */
export function openapiDocument() {
  return {
    openapi: '3.1.0',
    info: {
      title: 'Lapse',
      version: '1.0.0',
      description:
        'Relativistic observables near massive bodies (Schwarzschild, Kerr and weak-field metrics) as a JSON API. ' +
        'Every computation takes one case or a batch {"items": [...]}; quantities are a bare number in the default SI unit or ' +
        '{"value", "unit", "uncertainty"}; errors are RFC 9457 problem documents. Results are not certified for safety-of-life use.',
      license: { name: 'Proprietary' },
    },
    tags: [
      { name: 'reference', description: 'Constants and documents.' },
      { name: 'radii', description: 'Characteristic radii of Kerr black holes.' },
      { name: 'redshift', description: 'Gravitational redshift of static and orbiting emitters, and its inversion to a radius or a mass.' },
      { name: 'clock-rate', description: 'Clock rates and fractional clock offsets in gravitational fields, and where a clock runs at a given rate.' },
      { name: 'binaries', description: 'Binary pulsars: post-Keplerian parameters in general relativity, masses from measured ones, orbital decay and coalescence time.' },
      { name: 'orbits', description: 'Orbits around massive bodies: circular orbits and their frequencies, the relativistic periastron advance, and gyroscope precession (geodetic and frame dragging).' },
      { name: 'light', description: 'Light propagation past a body: the Shapiro (excess) time delay, and the deflection of a ray in the weak field (PPN) and exactly in the Schwarzschild metric.' },
      { name: 'shadow', description: 'The shadow of a Kerr black hole seen by a distant observer: outline in Bardeen celestial coordinates, diameters, angular size, SVG figure.' },
      { name: 'tides', description: 'Tidal accelerations on a falling object, survival radius and proper time left; tidal disruption of stars (tidal radius, Hills mass) and Roche limits.' },
      { name: 'infall', description: 'Radial fall into a Schwarzschild black hole: the pulse timeline a static receiver records (arrival times, spacing, redshift), and the proper time to the horizon and to r = 0.' },
    ],
  };
}
