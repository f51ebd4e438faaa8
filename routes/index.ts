/** Every API area, registered in one place. */
import type { FastifyInstance } from 'fastify';
import type { Config } from '../server/config.js';
import { constantsRoutes } from './constants.js';
import { radiiRoutes } from './radii.js';

export async function routes(app: FastifyInstance, opts: { config: Config }): Promise<void> {
  await app.register(constantsRoutes);
  await app.register(radiiRoutes, opts);
}
