export declare const INFLUXD_PATH: string;
export declare function influxdInstalled(): boolean;

export interface InfluxdHandle {
  /** http://127.0.0.1:PORT */
  readonly url: string;
  readonly httpPort: number;
  /** Temporary folder with the config, meta, data, wal and log. */
  readonly dir: string;
  readonly pid: number | null;
  readonly running: boolean;
  start(): Promise<void>;
  stop(signal?: NodeJS.Signals): Promise<void>;
  dispose(): Promise<void>;
}

export declare function startInfluxd(options?: { retentionCheckInterval?: string; startTimeoutMs?: number }): Promise<InfluxdHandle>;
