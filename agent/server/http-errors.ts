/**
 * One error body for every failure: { error: { code, message } }, with the
 * AgentError code (docs/errors.md) and an HTTP status that matches it.
 * Internal details stay in the log; the response says only what the client
 * can act on.
 */
import type { FastifyError, FastifyReply, FastifyRequest } from 'fastify';
import { type ErrorCode, isAgentError } from '../core/errors.js';
import { redactUrl } from './security.js';

const STATUS: Partial<Record<ErrorCode, number>> = {
  API_BAD_PARAMETER: 400,
  API_UNAUTHORIZED: 401,
  API_NOT_FOUND: 404,
  API_RATE_LIMITED: 429,
  STORE_QUERY_FAILED: 503,
};

export function errorBody(code: ErrorCode, message: string): { error: { code: ErrorCode; message: string } } {
  return { error: { code, message } };
}

export function handleError(err: FastifyError | Error, req: FastifyRequest, reply: FastifyReply): void {
  if (isAgentError(err)) {
    const status = STATUS[err.code] ?? 500;
    if (status >= 500) req.log.error({ code: err.code, url: redactUrl(req.url), err: err.message }, 'request failed');
    void reply.code(status).send(errorBody(err.code, err.message));
    return;
  }
  const fe = err as FastifyError;
  if (fe.validation !== undefined) {
    void reply.code(400).send(errorBody('API_BAD_PARAMETER', fe.message));
    return;
  }
  if (fe.statusCode !== undefined && fe.statusCode >= 400 && fe.statusCode < 500) {
    // Fastify's own client errors (body too large, bad content type, malformed URL): their message names the problem.
    void reply.code(fe.statusCode).send(errorBody('API_BAD_PARAMETER', fe.message));
    return;
  }
  req.log.error({ url: redactUrl(req.url), err: err.message }, 'request failed');
  void reply.code(500).send(errorBody('INTERNAL', 'Internal error; the server log has the details'));
}
