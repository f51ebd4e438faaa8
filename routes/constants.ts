/** GET /v1/constants: the constants the service computes with, with uncertainties and sources. */
import type { FastifyInstance } from 'fastify';
import etag from '@fastify/etag';
import { Type } from '@sinclair/typebox';
import { CONSTANTS } from '../physics/constants.js';

const ConstantsReply = Type.Object({
  constants: Type.Array(
    Type.Object({
      name: Type.String({ description: 'Stable machine name.' }),
      symbol: Type.String({ description: 'Usual symbol.' }),
      value: Type.Number({ description: 'Value in `unit`.' }),
      uncertainty: Type.Number({ description: 'One-sigma standard uncertainty in `unit`; 0 when exact or nominal by definition.' }),
      unit: Type.String({ description: 'VOUnits unit string ("" for dimensionless).' }),
      source: Type.String({ description: 'Published source of the value.' }),
    }),
    { description: 'Every constant the computations use.' },
  ),
});

export async function constantsRoutes(app: FastifyInstance): Promise<void> {
  // ETags (with 304 on If-None-Match) for the read-only documents of this plugin only: POST
  // replies are not cached by proxies, and hashing every computed reply would cost each request.
  await app.register(etag);
  const body = { constants: CONSTANTS };
  app.get(
    '/v1/constants',
    {
      schema: {
        summary: 'Constants used by every computation',
        description: 'Each constant with its value, 1-sigma uncertainty, unit and published source (CODATA 2018, IAU 2012/2015 resolutions, IERS Conventions 2010).',
        tags: ['reference'],
        response: { 200: ConstantsReply },
      },
    },
    async (_request, reply) => {
      reply.header('cache-control', 'public, max-age=86400');
      return body;
    },
  );
}
