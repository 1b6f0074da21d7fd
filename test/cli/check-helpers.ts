/** Runs `main()` with a capturing CliIO in a temp folder (no child process). */
import { realpathSync } from 'node:fs';
import { main } from '../../server/src/cli/main';
import type { CliIO } from '../../server/src/cli/io';
import { clearProjectCache } from '../../server/src/workspace/project';
import { makeTree } from '../workspace/helpers';

export interface RunResult {
  code: number;
  stdout: string;
  stderr: string;
}

export async function runCli(
  args: string[],
  cwd: string,
  options: { isTTY?: boolean; stderrIsTTY?: boolean; env?: Record<string, string | undefined>; stdin?: string | Uint8Array } = {},
): Promise<RunResult> {
  // Each run sees the files as they are now, as a new process would.
  clearProjectCache();
  let stdout = '';
  let stderr = '';
  const io: CliIO = {
    cwd,
    stdout: (t) => void (stdout += t),
    stderr: (t) => void (stderr += t),
    isTTY: options.isTTY ?? false,
    stderrIsTTY: options.stderrIsTTY ?? false,
    env: options.env ?? {},
    readStdin: async () => (typeof options.stdin === 'string' ? Buffer.from(options.stdin, 'utf8') : (options.stdin ?? new Uint8Array())),
  };
  const code = await main(args, io);
  return { code, stdout, stderr };
}

export function tempTree(files: Record<string, string | Uint8Array>): string {
  return realpathSync(makeTree(files));
}

/** Scaled linear 0.00085 -> 0.012, T = 1000: sqrt(abar_T) = 0.068 (Lin et al. 2023, Table 1, from memory). */
export const LEAKY_V = `noise_scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  prediction_type: v_prediction
`;

/** The same schedule rescaled to zero terminal SNR with an epsilon target: an error. */
export const ZERO_SNR_EPSILON = `noise_scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  rescale_betas_zero_snr: true
  prediction_type: epsilon
`;

/** Zero terminal SNR with a v target and no sampling settings: nothing to report. */
export const CLEAN = `noise_scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  rescale_betas_zero_snr: true
  prediction_type: v_prediction
`;

/** Clean schedule sampled with linspace spacing and 8 steps: an information finding only. */
export const FEW_STEPS_LINSPACE = `${CLEAN}  timestep_spacing: linspace
sampling:
  num_inference_steps: 8
`;
