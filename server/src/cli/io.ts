/** What a command may touch of the outside world; tests pass their own. */
export interface CliIO {
  cwd: string;
  stdout: (text: string) => void;
  stderr: (text: string) => void;
  /** True when stdout is a terminal (colours, progress). */
  isTTY: boolean;
  env: Record<string, string | undefined>;
}

/** Thrown for bad arguments; main prints the one-line message and exits 2. */
export class UsageError extends Error {}

export type Command = (args: string[], io: CliIO) => Promise<number>;
