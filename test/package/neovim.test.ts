/**
 * The README's Neovim 0.7+ snippet, as written, in a real Neovim from Debian (headless), against
 * the package installed from `npm pack` into a temporary prefix: open a config outside the
 * checkout, wait for the server's diagnostics, write them to a file and check them. The 0.11+
 * snippet is compiled by the same Neovim (its API calls need 0.11, which Debian does not ship).
 */
import { spawnSync } from 'node:child_process';
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { REPO_ROOT } from '../lsp/buildServer';
import { removeTree } from '../workspace/helpers';
import { ensureDebianTool } from './debian-tool';
import { packAndInstall, type InstalledCli } from './installed';

const README = readFileSync(join(REPO_ROOT, 'README.md'), 'utf8');

function snippet(heading: RegExp): string {
  const at = README.search(heading);
  expect(at, `README has a snippet under ${heading}`).toBeGreaterThanOrEqual(0);
  const block = /```lua\n([\s\S]*?)```/.exec(README.slice(at));
  return block![1]!;
}

const SNIPPET_07 = snippet(/^Neovim 0\.7\+/m);
const SNIPPET_011 = snippet(/^Neovim 0\.11\+/m);

/**
 * Leaky scaled-linear schedule (sqrt(abar_T) = 0.068, Lin et al. 2023, Table 1, recalled from
 * memory) sampled with linspace spacing and 8 steps: terminal-snr-leak (warning) and
 * few-steps-linspace (info). The snippet's settings turn the second off.
 */
const CONFIG = `# Lanternfish Pictures: night storyboard preview sampler
noise_scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  prediction_type: v_prediction
  timestep_spacing: linspace
sampling:
  num_inference_steps: 8
`;

/** Waits for diagnostics, then writes them (and the client's name) as JSON and quits. */
const PROBE = `
local out = assert(os.getenv('NOISELINT_NVIM_OUT'))
local ok = vim.wait(45000, function() return #vim.diagnostic.get(0) > 0 end, 100)
local found = {}
for _, d in ipairs(vim.diagnostic.get(0)) do
  local lsp = (d.user_data or {}).lsp or {}
  table.insert(found, { code = d.code or lsp.code, severity = d.severity, lnum = d.lnum, message = d.message, source = d.source })
end
local names = {}
for _, c in pairs(vim.lsp.get_active_clients()) do table.insert(names, c.name) end
local f = assert(io.open(out, 'w'))
f:write(vim.fn.json_encode({ waited = ok, diagnostics = found, clients = names, version = vim.version() }))
f:close()
vim.cmd('qa!')
`;

const tool = ensureDebianTool('nvim', 'neovim');
if (!tool.ok) {
  console.warn(`\n*** SKIPPED: the Neovim snippet test: ${tool.reason} ***\n`);
}

describe.skipIf(!tool.ok)('README Neovim snippets in a real Neovim', () => {
  let cli: InstalledCli;
  beforeAll(() => {
    cli = packAndInstall();
  }, 240_000);
  afterAll(() => {
    if (cli && !process.env.NOISELINT_KEEP_TEMP) removeTree(cli.dir);
  });

  function nvim(args: string[], cwd: string, env: NodeJS.ProcessEnv) {
    return spawnSync('nvim', ['--headless', '-i', 'NONE', '-n', ...args], { cwd, env, encoding: 'utf8', timeout: 90_000, input: '' });
  }

  function homeFor(name: string): { work: string; env: NodeJS.ProcessEnv } {
    const home = join(cli.dir, name);
    const work = join(home, 'lanternfish-previews');
    mkdirSync(join(work, '.git'), { recursive: true });
    const env: NodeJS.ProcessEnv = {
      ...cli.env,
      HOME: home,
      XDG_CONFIG_HOME: join(home, 'config'),
      XDG_DATA_HOME: join(home, 'data'),
      XDG_STATE_HOME: join(home, 'state'),
      XDG_CACHE_HOME: join(home, 'cache'),
      NOISELINT_NVIM_OUT: join(home, 'result.json'),
    };
    return { work, env };
  }

  it("the 0.7+ snippet starts the installed server, which reports with the snippet's settings", () => {
    expect(SNIPPET_07).toContain("cmd = { 'noiselint', 'lsp', '--stdio' }");
    expect(SNIPPET_07).not.toMatch(/npx|vim\.fs\.|vim\.lsp\.config|vim\.lsp\.enable/);
    const { work, env } = homeFor('nvim-07');
    writeFileSync(join(work, 'preview-sampler.yaml'), CONFIG);
    const init = join(work, '..', 'init.lua');
    const probe = join(work, '..', 'probe.lua');
    writeFileSync(init, SNIPPET_07);
    writeFileSync(probe, PROBE);
    const run = nvim(['-u', init, '-c', `luafile ${probe}`, 'preview-sampler.yaml'], work, env);
    let result: {
      waited: boolean;
      diagnostics: { code: string; severity: number; lnum: number; message: string; source: string }[];
      clients: string[];
    };
    try {
      result = JSON.parse(readFileSync(env.NOISELINT_NVIM_OUT!, 'utf8'));
    } catch {
      throw new Error(`nvim wrote no result (exit ${run.status}): ${run.stderr}${run.stdout}`);
    }
    expect(result.clients).toEqual(['noiselint']);
    expect(result.waited).toBe(true);
    const leak = result.diagnostics.find((d) => d.code === 'terminal-snr-leak');
    expect(leak, JSON.stringify(result.diagnostics)).toBeDefined();
    expect(leak!.source).toBe('noiselint');
    expect(leak!.severity).toBe(2); // vim.diagnostic.severity.WARN
    expect(leak!.lnum).toBe(3); // 0-based: `beta_schedule: scaled_linear`
    expect(leak!.message).toMatch(/0\.068\b/);
    // The snippet turns few-steps-linspace off; the server only knows that from its settings.
    expect(result.diagnostics.map((d) => d.code)).not.toContain('few-steps-linspace');

    // Without those settings the same file does get few-steps-linspace (the control).
    const control = spawnSync(cli.bin, ['check', '-f', 'json', 'preview-sampler.yaml'], { cwd: work, env: cli.env, encoding: 'utf8' });
    const rules = JSON.parse(control.stdout).files[0].findings.map((f: { rule: string }) => f.rule);
    expect(rules).toEqual(expect.arrayContaining(['terminal-snr-leak', 'few-steps-linspace']));
  }, 180_000);

  it('the 0.11+ snippet names the installed command and is valid Lua', () => {
    expect(SNIPPET_011).toContain("cmd = { 'noiselint', 'lsp', '--stdio' }");
    expect(SNIPPET_011).toMatch(/vim\.lsp\.config\('noiselint'/);
    expect(SNIPPET_011).toMatch(/vim\.lsp\.enable\('noiselint'\)/);
    expect(SNIPPET_011).not.toMatch(/npx/);
    const { work, env } = homeFor('nvim-011');
    const file = join(work, 'snippet-011.lua');
    writeFileSync(file, SNIPPET_011);
    const check = `local chunk, err = loadfile(${JSON.stringify(file)}); local f = assert(io.open(os.getenv('NOISELINT_NVIM_OUT'), 'w')); f:write(chunk and 'ok' or tostring(err)); f:close(); vim.cmd('qa!')`;
    const probe = join(work, 'compile.lua');
    writeFileSync(probe, check);
    nvim(['-u', 'NONE', '-c', `luafile ${probe}`], work, env);
    expect(readFileSync(env.NOISELINT_NVIM_OUT!, 'utf8')).toBe('ok');
  }, 60_000);
});
