/** The part of a pino logger the MQTT adapter uses; any pino instance (or child) fits. */
export interface SourceLogger {
  info(obj: object, msg?: string): void;
  warn(obj: object, msg?: string): void;
  error(obj: object, msg?: string): void;
  debug(obj: object, msg?: string): void;
}

const noop = (): void => undefined;

/** Used when no logger is given: state changes are still visible through onState and status(). */
export const SILENT_LOGGER: SourceLogger = Object.freeze({ info: noop, warn: noop, error: noop, debug: noop });
