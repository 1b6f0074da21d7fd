/** What a command may touch of the outside world; tests pass their own. */
export interface CliIO {
  cwd: string;
  stdout: (text: string) => void;
  stderr: (text: string) => void;
  /** True when stdout is a terminal (colours). */
  isTTY: boolean;
  /** True when stderr is a terminal (progress). */
  stderrIsTTY?: boolean;
  env: Record<string, string | undefined>;
  /** All of standard input, as bytes (for `-`); absent where there is none to read. */
  readStdin?: () => Promise<Uint8Array>;
  /** The bundled worker-thread entry of `check` (server/dist/checkWorker.js); absent: one thread only. */
  workerScript?: string;
}

/** Thrown for bad arguments; main prints the one-line message and exits 2. */
export class UsageError extends Error {}

export type Command = (args: string[], io: CliIO) => Promise<number>;
