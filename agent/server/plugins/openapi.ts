/**
 * GET /api/openapi.json: an OpenAPI 3.0 document built from the schemas the
 * routes declare (no separate description to drift out of step).
 */
import type { FastifyPluginAsync, RouteOptions } from 'fastify';
import '../schemas.js';

export interface CollectedRoute {
  method: string;
  url: string;
  schema: Record<string, unknown> | undefined;
}

/** Records each route as it is added; register before the route plugins. */
export function collectRoutes(app: { addHook(name: 'onRoute', fn: (r: RouteOptions) => void): unknown }): CollectedRoute[] {
  const routes: CollectedRoute[] = [];
  app.addHook('onRoute', (r: RouteOptions) => {
    const methods = Array.isArray(r.method) ? r.method : [r.method];
    for (const m of methods) {
      if (m === 'HEAD') continue;
      routes.push({ method: m.toLowerCase(), url: r.url, schema: r.schema as Record<string, unknown> | undefined });
    }
  });
  return routes;
}

function parametersOf(schema: Record<string, unknown>, where: 'path' | 'query'): unknown[] {
  const s = schema[where === 'path' ? 'params' : 'querystring'] as { properties?: Record<string, unknown>; required?: string[] } | undefined;
  if (s?.properties === undefined) return [];
  return Object.entries(s.properties).map(([name, sch]) => ({
    name,
    in: where,
    required: where === 'path' || (s.required ?? []).includes(name),
    schema: sch,
  }));
}

/** OpenAPI 3.0 has `nullable` rather than type arrays; convert ['x','null'] recursively. */
function toOpenApiSchema(s: unknown): unknown {
  if (Array.isArray(s)) return s.map(toOpenApiSchema);
  if (s === null || typeof s !== 'object') return s;
  const out: Record<string, unknown> = {};
  for (const [k, v] of Object.entries(s as Record<string, unknown>)) {
    if (k === 'type' && Array.isArray(v)) {
      const types = v.filter((t) => t !== 'null');
      out.type = types[0];
      if (types.length !== v.length) out.nullable = true;
    } else out[k] = toOpenApiSchema(v);
  }
  return out;
}

export function openApiDocument(routes: readonly CollectedRoute[], version: string): Record<string, unknown> {
  const paths: Record<string, Record<string, unknown>> = {};
  for (const r of routes) {
    const schema = r.schema ?? {};
    if (schema.hide === true) continue;
    const path = r.url.replace(/:([A-Za-z0-9_]+)/g, '{$1}');
    const produces = (schema.produces as string[] | undefined) ?? ['application/json'];
    const responses: Record<string, unknown> = {};
    for (const [code, body] of Object.entries((schema.response as Record<string, unknown> | undefined) ?? {})) {
      const contentType = code.startsWith('2') ? produces[0]! : 'application/json';
      responses[code] = { description: code.startsWith('2') ? 'success' : 'error', content: { [contentType]: { schema: toOpenApiSchema(body) } } };
    }
    if (Object.keys(responses).length === 0) responses['200'] = { description: 'success' };
    paths[path] ??= {};
    paths[path]![r.method] = {
      summary: schema.summary ?? '',
      parameters: toOpenApiSchema([...parametersOf(schema, 'path'), ...parametersOf(schema, 'query')]),
      responses,
      security: [{ bearer: [] }, {}],
    };
  }
  return {
    openapi: '3.0.3',
    info: {
      title: 'seqmon HTTP API',
      version,
      description: 'Three-phase unbalance monitoring of distribution feeders: sequence components, u2/u0, alarms, trends. Times are ISO-8601 UTC; from/to also accept epoch milliseconds.',
    },
    components: { securitySchemes: { bearer: { type: 'http', scheme: 'bearer', description: 'Needed when the server has an access token; SSE may pass ?token= instead.' } } },
    paths,
  };
}

export const openApiPlugin: FastifyPluginAsync<{ routes: CollectedRoute[]; version: string }> = async (app, { routes, version }) => {
  let doc: Record<string, unknown> | null = null;
  app.get('/api/openapi.json', { schema: { summary: 'This document (OpenAPI 3.0)' } }, async () => {
    doc ??= openApiDocument(routes, version);
    return doc;
  });
};
