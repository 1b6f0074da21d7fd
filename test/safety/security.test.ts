/**
 * Security properties: pair paths never leave the project folder (`..`, absolute paths,
 * symlinks); no command touches the network; no source or bundle evaluates code from configs.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readdirSync, readFileSync, statSync, symlinkSync, writeFileSync } from 'node:fs';
import { join, relative } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { findPartners, resolvePairPath, validatePairs } from '../../server/src/workspace';
import { loadProject } from '../../server/src/workspace/projectFile';
import { WorkspaceSession } from '../../server/src/workspace/session';
import { CLI, REPO, describeCrash, ensureCliBuilt, runCli, removeTempDirs, tempDir } from '../adversarial/helpers';
import { LspTestClient } from '../load/lspClient';

const NO_NETWORK = join(REPO, 'test/safety/no-network.cjs');

const TRAIN = 'num_train_timesteps: 1000\nbeta_schedule: scaled_linear\nbeta_start: 0.00085\nbeta_end: 0.012\nprediction_type: epsilon\n';
const SAMPLE = 'num_inference_steps: 30\ntimestep_spacing: leading\nguidance_scale: 7.5\n';
/** Disagrees with TRAIN on T, so a pairing with it would produce train-sample-mismatch. */
const OUTSIDE_TRAIN = 'num_train_timesteps: 777\nbeta_schedule: linear\nprediction_type: v_prediction\nsecret_marker_7f3a: 1\n';

/** outer/ holds a secret config; outer/project/ is the project. */
function layout() {
  const outer = tempDir('escape');
  const root = join(outer, 'project');
  mkdirSync(join(root, 'runs'), { recursive: true });
  writeFileSync(join(outer, 'secret-train.yaml'), OUTSIDE_TRAIN);
  writeFileSync(join(root, 'runs', 'sample.yaml'), SAMPLE);
  writeFileSync(join(root, 'runs', 'train.yaml'), TRAIN);
  symlinkSync(join(outer, 'secret-train.yaml'), join(root, 'runs', 'linked-train.yaml'));
  symlinkSync(outer, join(root, 'up'));
  return { outer, root };
}

function listFiles(dir: string): string[] {
  const out: string[] = [];
  for (const e of readdirSync(dir, { withFileTypes: true })) {
    const p = join(dir, e.name);
    if (e.isDirectory()) out.push(...listFiles(p));
    else if (e.isFile()) out.push(p);
  }
  return out;
}

describe('security', () => {
  afterAll(removeTempDirs);
  beforeAll(() => ensureCliBuilt());

  it('pair paths with .., absolute paths and escaping symlinks are refused', () => {
    const { outer, root } = layout();
    writeFileSync(
      join(root, 'noiselint.project.yaml'),
      [
        'pairs:',
        '  - {training: ../secret-train.yaml, sampling: runs/sample.yaml}',
        '  - {training: runs/../../secret-train.yaml, sampling: runs/sample.yaml}',
        `  - {training: ${join(outer, 'secret-train.yaml')}, sampling: runs/sample.yaml}`,
        '  - {training: runs/linked-train.yaml, sampling: runs/sample.yaml}',
        '  - {training: up/secret-train.yaml, sampling: runs/sample.yaml}',
        '  - {training: runs/train.yaml, sampling: runs/sample.yaml}',
        '',
      ].join('\n'),
    );
    const project = loadProject(join(root, 'runs', 'sample.yaml'));
    for (const written of [
      '../secret-train.yaml',
      'runs/../../secret-train.yaml',
      join(outer, 'secret-train.yaml'),
      'runs/linked-train.yaml',
      'up/secret-train.yaml',
    ]) {
      const r = resolvePairPath(project, written);
      expect(r.ok, written).toBe(false);
    }
    expect(resolvePairPath(project, 'runs/train.yaml')).toEqual({ ok: true, path: join(root, 'runs', 'train.yaml') });
    const { pairs, warnings } = validatePairs(project);
    expect(pairs).toEqual([{ training: join(root, 'runs', 'train.yaml'), sampling: join(root, 'runs', 'sample.yaml') }]);
    expect(warnings).toHaveLength(5);
    const match = findPartners(join(root, 'runs', 'sample.yaml'), project, { roleOf: new WorkspaceSession({ stableTree: true }).roleOf });
    expect(match?.partners).toEqual([join(root, 'runs', 'train.yaml')]);
  });

  it('automatic pairing skips a symlink that resolves outside the project', () => {
    const { root } = layout();
    writeFileSync(join(root, 'noiselint.project.yaml'), 'autoPair: true\n');
    // runs/ holds sample.yaml, train.yaml and linked-train.yaml (-> outside). Without the link
    // check there would be two training files and the role rule would not pair at all.
    const project = loadProject(join(root, 'runs', 'sample.yaml'));
    const match = findPartners(join(root, 'runs', 'sample.yaml'), project, { roleOf: new WorkspaceSession({ stableTree: true }).roleOf });
    expect(match?.partners ?? []).not.toContain(join(root, 'runs', 'linked-train.yaml'));
    for (const p of match?.partners ?? []) expect(relative(root, p).startsWith('..')).toBe(false);
  });

  it('through the CLI, an escaping pair is a warning and the outside file is never read into findings', () => {
    const { outer, root } = layout();
    writeFileSync(
      join(root, 'noiselint.project.yaml'),
      'autoPair: false\npairs:\n  - {training: ../secret-train.yaml, sampling: runs/sample.yaml}\n',
    );
    const r = runCli(['check', 'runs/sample.yaml', '--format', 'json'], { cwd: root });
    expect(describeCrash(r)).toBeNull();
    expect(r.stdout + r.stderr).toMatch(/leaves the project folder/);
    expect(r.stdout).not.toMatch(/train-sample-mismatch/);
    expect(r.stdout).not.toContain('777');
    expect(r.stdout + r.stderr).not.toContain(outer + '/secret-train.yaml:');
  });

  it('the no-network preload really blocks sockets and child processes (control)', () => {
    const r = spawnSync(process.execPath, ['--require', NO_NETWORK, '-e', "require('node:http').get('http://127.0.0.1:9/')"], { encoding: 'utf8' });
    expect(r.status).not.toBe(0);
    expect(r.stderr).toContain('NOISELINT-NETWORK-ATTEMPT: http.request');
    const c = spawnSync(process.execPath, ['--require', NO_NETWORK, '-e', "require('node:child_process').execSync('true')"], { encoding: 'utf8' });
    expect(c.status).not.toBe(0);
    expect(c.stderr).toContain('NOISELINT-SUBPROCESS-ATTEMPT: child_process.execSync');
  });

  it('check, fix --dry-run, explain, rules and lsp make no network call and start no process', async () => {
    const dir = tempDir('offline');
    writeFileSync(join(dir, 'train.yaml'), TRAIN);
    writeFileSync(join(dir, 'sample.yaml'), SAMPLE);
    const nodeArgs = ['--require', NO_NETWORK];
    for (const args of [
      ['check', '.'],
      ['check', '.', '--format', 'sarif'],
      ['fix', '--dry-run', '.'],
      ['explain', 'train.yaml'],
      ['rules'],
      ['rules', 'terminal-snr-leak'],
      ['--version'],
    ]) {
      const r = runCli(args, { cwd: dir, nodeArgs });
      expect(describeCrash(r), args.join(' ')).toBeNull();
      expect(r.stderr, args.join(' ')).not.toMatch(/NOISELINT-(NETWORK|SUBPROCESS)-ATTEMPT/);
      expect(r.status, `${args.join(' ')}: ${r.stderr}`).not.toBe(2);
    }
    const client = await LspTestClient.start({ nodeArgs, cwd: dir });
    try {
      const uri = `file://${join(dir, 'train.yaml')}`;
      client.open(uri, TRAIN, 'yaml');
      const diags = await client.diagnosticsFor(uri, 1);
      expect(diags.length).toBeGreaterThan(0);
      await client.connection.sendRequest('textDocument/hover', { textDocument: { uri }, position: { line: 1, character: 3 } });
      await client.connection.sendRequest('textDocument/codeAction', {
        textDocument: { uri },
        range: { start: { line: 0, character: 0 }, end: { line: 5, character: 0 } },
        context: { diagnostics: diags },
      });
    } finally {
      await client.stop();
    }
    expect(client.stderr()).not.toMatch(/NOISELINT-(NETWORK|SUBPROCESS)-ATTEMPT/);
  });

  it('no eval, new Function, vm or child_process in the sources or the bundle', () => {
    const sources = [...listFiles(join(REPO, 'server/src')), ...listFiles(join(REPO, 'shared-math/src'))].filter((f) => /\.[cm]?[jt]s$/.test(f));
    expect(sources.length).toBeGreaterThan(10);
    const forbidden: [RegExp, string][] = [
      [/\beval\s*\(/, 'eval('],
      [/\bnew\s+Function\s*\(/, 'new Function'],
      [/\bFunction\s*\(\s*['"`]/, 'Function("...")'],
      [/from\s+['"](node:)?vm['"]|require\(\s*['"](node:)?vm['"]\s*\)/, 'the vm module'],
      [/\bvm\.(runIn|Script|compileFunction|SourceTextModule)/, 'vm.*'],
      [/from\s+['"](node:)?child_process['"]|require\(\s*['"](node:)?child_process['"]\s*\)/, 'child_process'],
      [/\bimport\s*\(\s*[^'"`\s)]/, 'import() of a computed specifier'],
      [/\b(setTimeout|setInterval)\s*\(\s*['"`]/, 'a timer with a code string'],
    ];
    const hits: string[] = [];
    for (const file of sources) {
      const text = readFileSync(file, 'utf8');
      for (const [re, what] of forbidden) if (re.test(text)) hits.push(`${relative(REPO, file)}: ${what}`);
    }
    expect(hits).toEqual([]);

    // The bundle also holds the dependencies (yaml, jsonc-parser, vscode-languageserver, ...).
    // Known and allowed: vscode-languageserver's node/files.js requires child_process for helpers
    // (resolveGlobalNodePath, resolveModulePath) that noiselint never calls; the runtime test
    // above blocks child_process and the language server still runs.
    const ALLOWED_BUNDLE_MODULES = new Set(['node_modules/vscode-languageserver/lib/node/files.js']);
    const bundle = readFileSync(CLI, 'utf8');
    expect(statSync(CLI).size).toBeGreaterThan(10_000);
    const moduleAt = (index: number): string => {
      const before = bundle.lastIndexOf('\n// ', index);
      return before < 0 ? '(top)' : bundle.slice(before + 4, bundle.indexOf('\n', before + 1));
    };
    const bundleHits: string[] = [];
    for (const [re, what] of forbidden.slice(0, 6)) {
      for (const m of bundle.matchAll(new RegExp(re.source, 'g'))) {
        const module = moduleAt(m.index);
        if (!ALLOWED_BUNDLE_MODULES.has(module))
          bundleHits.push(`${what} in ${module}: ${bundle.slice(Math.max(0, m.index - 60), m.index + 60).replace(/\s+/g, ' ')}`);
      }
    }
    expect(bundleHits).toEqual([]);
    // Nothing in our sources reaches the allowed helpers.
    const helperCalls = sources.filter((f) => /resolveGlobalNodePath|resolveModulePath|resolveGlobalYarnPath/.test(readFileSync(f, 'utf8')));
    expect(helperCalls).toEqual([]);
  });

  it('a config cannot reach code through YAML tags, merge keys or __proto__ (CLI, marker file)', () => {
    const dir = tempDir('tags');
    const marker = join(dir, 'pwned');
    writeFileSync(
      join(dir, 'train.yaml'),
      `${TRAIN}hook: !!python/object/apply:os.system ["touch ${marker}"]\nfn: !!js/function "function () { require('fs').writeFileSync('${marker}', 'x') }"\n__proto__: {polluted: true}\n`,
    );
    for (const command of ['check', 'explain', 'fix']) {
      const r = runCli([command, 'train.yaml'], { cwd: dir });
      expect(describeCrash(r), command).toBeNull();
    }
    expect(existsSync(marker)).toBe(false);
  });
});
