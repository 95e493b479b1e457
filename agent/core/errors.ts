/**
 * One error type for the whole agent. Every error carries a stable `code`
 * (documented in docs/errors.md, kept in step by test/unit/errors.test.ts)
 * and a message that tells the user what to fix. Callers branch on `code`,
 * never on message text.
 */
export const ERROR_CODES = {
  // configuration
  CFG_INVALID: 'The configuration does not match the schema; each problem is listed with its path, what was expected and what was found.',
  CFG_READ_FAILED: 'The configuration file could not be read or parsed as YAML/JSON.',
  CFG_RENAMED_KEY: 'A configuration key was renamed; the message names the new key.',
  CFG_ENV_INVALID: 'An environment variable override has a value that cannot be used.',
  // input frames (also the reason labels of the per-feeder rejection counters)
  FRAME_NOT_JSON: 'The payload is not valid JSON.',
  FRAME_TOO_LARGE: 'The payload is larger than the configured maximum and was refused before parsing.',
  FRAME_NOT_OBJECT: 'The payload is JSON but not an object.',
  FRAME_UNKNOWN_KIND: 'The frame kind is not phasor, rms or samples, or cannot be inferred from the fields present.',
  FRAME_BAD_FEEDER: 'The feeder id is missing or does not match [A-Za-z0-9_.-]{1,64}.',
  FRAME_UNKNOWN_FEEDER: 'The feeder is not configured and feeder discovery is off.',
  FRAME_BAD_TIMESTAMP: 'The timestamp is missing, not ISO-8601 or epoch milliseconds, or out of range.',
  FRAME_TIME_REVERSED: 'The timestamp is not later than the previous accepted frame of the same feeder and kind.',
  FRAME_MISSING_FIELD: 'A required field or phase is missing.',
  FRAME_BAD_VALUE: 'A field has the wrong type, or a value is NaN, infinite, negative where it cannot be, or out of range.',
  FRAME_BAD_LENGTH: 'Sample arrays are empty, too long, or of different lengths.',
  FRAME_BAD_RATE: 'The sample rate is missing, not a number, or outside the supported range.',
  // sources
  SRC_CONNECT_FAILED: 'A source could not connect; it keeps retrying with back-off.',
  SRC_CONFIG: 'A source is configured in a way it cannot run with.',
  SRC_COMTRADE_INVALID: 'A COMTRADE record (CFG or DAT) is malformed; the message names the file, line and field.',
  SRC_COMTRADE_UNSUPPORTED: 'A COMTRADE feature that this reader does not support was found.',
  // stores
  STORE_OPEN_FAILED: 'The trend store could not be opened or migrated.',
  STORE_WRITE_FAILED: 'A write to the trend store failed.',
  STORE_QUERY_FAILED: 'A query to the trend store failed.',
  STORE_QUEUE_FULL: 'The store-and-forward queue reached its bound; the overflow policy applied.',
  STORE_SCHEMA_TOO_NEW: 'The database was written by a newer seqmon; upgrade seqmon or use another file.',
  // HTTP API
  API_BAD_PARAMETER: 'A query or path parameter is invalid; the message names it.',
  API_NOT_FOUND: 'The feeder or resource does not exist.',
  API_UNAUTHORIZED: 'The access token is missing or wrong.',
  API_RATE_LIMITED: 'Too many requests from this client.',
  API_INSECURE_BIND: 'The HTTP server would listen beyond loopback without TLS or an explicit acknowledgement.',
  // command line
  CLI_USAGE: 'The command line is wrong; run seqmon --help.',
  CLI_INPUT_REJECTED: 'One or more input lines were rejected (each is reported on stderr).',
  // internal
  INTERNAL: 'An unexpected internal error; please report it with the log.',
} as const;

export type ErrorCode = keyof typeof ERROR_CODES;

export class AgentError extends Error {
  readonly code: ErrorCode;
  readonly details: Readonly<Record<string, unknown>> | undefined;

  constructor(code: ErrorCode, message: string, options?: { cause?: unknown; details?: Record<string, unknown> }) {
    super(message, options?.cause === undefined ? undefined : { cause: options.cause });
    this.name = 'AgentError';
    this.code = code;
    this.details = options?.details === undefined ? undefined : Object.freeze({ ...options.details });
  }
}

export function isAgentError(e: unknown): e is AgentError {
  return e instanceof AgentError;
}

/** Frame rejection codes, used as the `reason` label of rejection counters. */
export type FrameErrorCode = Extract<ErrorCode, `FRAME_${string}`>;
