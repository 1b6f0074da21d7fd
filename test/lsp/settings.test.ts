/**
 * Settings reach the server on clients that never answer workspace/configuration: through
 * initializationOptions and workspace/didChangeConfiguration (unit level, then the real server).
 */
import { afterEach, describe, expect, it } from 'vitest';
import { DiagnosticSeverity } from 'vscode-languageserver-protocol';
import { PushedSettings, settingsFromClient } from '../../server/src/lsp/settings';
import { DEFAULT_CAPABILITIES, LspClient } from './harness';

const STRICT = { rules: { 'terminal-snr-leak': 'error' }, debounceMs: 20 };

describe('PushedSettings and settingsFromClient', () => {
  it('takes initializationOptions with or without the noiselint key', () => {
    for (const init of [{ noiselint: STRICT }, STRICT]) {
      const pushed = new PushedSettings();
      pushed.initialize(init);
      expect(pushed.current().rules).toEqual({ 'terminal-snr-leak': 'error' });
      expect(pushed.current().debounceMs).toBe(20);
    }
  });

  it('didChangeConfiguration replaces; an empty section restores defaults; no settings keeps them', () => {
    const pushed = new PushedSettings();
    pushed.initialize({ noiselint: STRICT });
    pushed.changed(null);
    pushed.changed({});
    expect(pushed.current().rules).toEqual({ 'terminal-snr-leak': 'error' });
    pushed.changed({ noiselint: { rules: { 'few-steps-linspace': 'off' } } });
    expect(pushed.current().rules).toEqual({ 'few-steps-linspace': 'off' });
    pushed.changed({ noiselint: {} });
    expect(pushed.current().rules).toEqual({});
  });

  it('uses the client answer when there is one, else the pushed settings (no support, null, error, silence)', async () => {
    const pushed = new PushedSettings();
    pushed.initialize({ noiselint: STRICT });
    const answered = await settingsFromClient(async () => ({ rules: { 'terminal-snr-leak': 'off' } }), pushed);
    expect(answered.rules).toEqual({ 'terminal-snr-leak': 'off' });
    expect((await settingsFromClient(null, pushed)).rules).toEqual(STRICT.rules);
    expect((await settingsFromClient(async () => null, pushed)).rules).toEqual(STRICT.rules);
    expect((await settingsFromClient(async () => [null], pushed)).rules).toEqual(STRICT.rules);
    const errors: unknown[] = [];
    expect(
      (
        await settingsFromClient(
          () => Promise.reject(new Error('no')),
          pushed,
          (e) => errors.push(e),
        )
      ).rules,
    ).toEqual(STRICT.rules);
    expect(errors).toHaveLength(1);
    const started = Date.now();
    const silent = await settingsFromClient(
      () => new Promise(() => {}),
      pushed,
      () => {},
      50,
    );
    expect(silent.rules).toEqual(STRICT.rules);
    expect(Date.now() - started).toBeGreaterThanOrEqual(45);
  });
});

// Scaled linear 0.00085 -> 0.012, T = 1000: a terminal-snr-leak warning by default (Lin et al. 2023, Table 1, from memory).
const LEAKY = `noise_scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  prediction_type: v_prediction
`;

describe('the server with clients that do not answer workspace/configuration', () => {
  let client: LspClient | undefined;
  afterEach(async () => {
    await client?.stop();
    client = undefined;
  });

  const leakSeverity = async (c: LspClient, uri: string, since = 0) => {
    const p = await c.waitForDiagnostics(uri, (d) => d.diagnostics.some((x) => x.code === 'terminal-snr-leak') || d.diagnostics.length === 0, since);
    return p.diagnostics.find((x) => x.code === 'terminal-snr-leak')?.severity;
  };

  it('no configuration capability: initializationOptions apply, then didChangeConfiguration', async () => {
    const capabilities = { ...DEFAULT_CAPABILITIES, workspace: { ...DEFAULT_CAPABILITIES.workspace, configuration: false } };
    client = await LspClient.start({ capabilities, initializationOptions: { noiselint: STRICT } });
    const uri = 'untitled:lanternfish-leaky.yaml';
    client.open(uri, LEAKY);
    expect(await leakSeverity(client, uri)).toBe(DiagnosticSeverity.Error);
    expect(client.configurationRequests).toBe(0);
    const before = client.publicationsFor(uri).length;
    client.notify('workspace/didChangeConfiguration', { settings: { noiselint: { rules: { 'terminal-snr-leak': 'info' } } } });
    await client.waitUntil(() => client!.publicationsFor(uri).length > before, 'a new publication');
    const last = client.publicationsFor(uri).at(-1)!;
    expect(last.diagnostics.find((x) => x.code === 'terminal-snr-leak')?.severity).toBe(DiagnosticSeverity.Information);
  });

  it('a client that answers workspace/configuration with null gets the initializationOptions', async () => {
    client = await LspClient.start({ initializationOptions: { noiselint: STRICT }, settings: () => null });
    const uri = 'untitled:lanternfish-null-answer.yaml';
    client.open(uri, LEAKY);
    expect(await leakSeverity(client, uri)).toBe(DiagnosticSeverity.Error);
    expect(client.configurationRequests).toBeGreaterThan(0);
  });
});
