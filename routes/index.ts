/** Every API area, registered in one place. */
import type { FastifyInstance } from 'fastify';
import type { Config } from '../server/config.js';
import { constantsRoutes } from './constants.js';
import { radiiRoutes } from './radii.js';
import { redshiftRoutes } from './redshift.js';
import { clockRateRoutes } from './clock-rate.js';
import { orbitsCircularRoutes } from './orbits-circular.js';
import { orbitsWeakRoutes } from './orbits-weak.js';
import { binariesRoutes } from './binaries.js';
import { lightRoutes } from './light.js';
import { shadowRoutes } from './shadow.js';
import { tidesRoutes } from './tides.js';
import { infallRoutes } from './infall.js';
import { lineProfileRoutes } from './line-profile.js';

export async function routes(app: FastifyInstance, opts: { config: Config }): Promise<void> {
  await app.register(constantsRoutes);
  await app.register(radiiRoutes, opts);
  await app.register(redshiftRoutes, opts);
  await app.register(clockRateRoutes, opts);
  await app.register(orbitsCircularRoutes, opts);
  await app.register(orbitsWeakRoutes, opts);
  await app.register(binariesRoutes, opts);
  await app.register(lightRoutes, opts);
  await app.register(shadowRoutes, opts);
  await app.register(tidesRoutes, opts);
  await app.register(infallRoutes, opts);
  await app.register(lineProfileRoutes, opts);
}
