/**
 * A deterministic corpus of diffusion configs for the benchmarks (invented Lanternfish Pictures
 * runs): training and sampling files in YAML (60%), JSON (30%) and JSONC (10%), 25 to 90 lines,
 * nested the way real training configs are, in folders of 20 (so automatic pairing applies).
 */
import { mkdirSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';

const SCHEDULES: Record<string, Json>[] = [
  { beta_schedule: 'scaled_linear', beta_start: 0.00085, beta_end: 0.012 },
  { beta_schedule: 'linear', beta_start: 0.0001, beta_end: 0.02 },
  { beta_schedule: 'squaredcos_cap_v2' },
  { beta_schedule: 'sigmoid', beta_start: 0.0001, beta_end: 0.02 },
];
type Json = string | number | boolean | null | Json[] | { [k: string]: Json };

const TARGETS = ['epsilon', 'v_prediction', 'sample'];
const SPACINGS = ['leading', 'linspace', 'trailing'];
const SAMPLERS = ['ddim', 'euler', 'dpm-solver-multistep', 'heun', 'unipc', 'ddpm'];
const SUBJECTS = ['harbour-night', 'lantern-market', 'white-sneaker', 'glass-vase', 'moonlit-pier', 'studio-chair'];

/** A small LCG so the corpus is the same on every machine. */
function rng(seed: number): () => number {
  let x = seed >>> 0;
  return () => {
    x = (Math.imul(x, 1664525) + 1013904223) >>> 0;
    return x / 0x100000000;
  };
}

function pick<T>(r: () => number, xs: readonly T[]): T {
  return xs[Math.floor(r() * xs.length)]!;
}

export function trainingConfig(i: number): Record<string, Json> {
  const r = rng(i * 7919 + 1);
  const schedule = pick(r, SCHEDULES);
  const subject = pick(r, SUBJECTS);
  const cfg: Record<string, Json> = {
    run: `lanternfish-${subject}-${i}`,
    model: {
      base: `lanternfish-latent-${1 + (i % 3)}`,
      resolution: pick(r, [512, 768, 1024, 2048]),
      channels: pick(r, [4, 8, 16]),
      attention_heads: pick(r, [8, 16]),
      dropout: Math.round(r() * 10) / 100,
    },
    noise_scheduler: {
      num_train_timesteps: 1000,
      ...schedule,
      prediction_type: pick(r, TARGETS),
      rescale_betas_zero_snr: r() < 0.4,
      clip_sample: r() < 0.2,
    },
    training: {
      learning_rate: pick(r, [1e-5, 2e-5, 5e-6]),
      batch_size: pick(r, [8, 16, 32, 64]),
      max_steps: pick(r, [20000, 50000, 120000]),
      mixed_precision: pick(r, ['fp16', 'bf16']),
      gradient_checkpointing: r() < 0.5,
      ema_decay: 0.9999,
    },
    data: {
      root: `/data/lanternfish/${subject}`,
      captions: `/data/lanternfish/${subject}/captions.jsonl`,
      center_crop: r() < 0.5,
      random_flip: r() < 0.5,
      buckets: [512, 640, 768, 896, 1024].slice(0, 2 + Math.floor(r() * 4)),
    },
    logging: { every: 100, sample_every: 1000, project: 'lanternfish-storyboards' },
  };
  const training = cfg.training as Record<string, Json>;
  if (r() < 0.3) training.noise_offset = pick(r, [0.05, 0.1]);
  if (r() < 0.3) training.snr_gamma = 5.0;
  return cfg;
}

export function samplingConfig(i: number): Record<string, Json> {
  const r = rng(i * 104729 + 3);
  const schedule = pick(r, SCHEDULES);
  const guidance = pick(r, [1.0, 4.5, 7.5, 9.0, 12.0]);
  const cfg: Record<string, Json> = {
    run: `lanternfish-sample-${i}`,
    scheduler: {
      num_train_timesteps: 1000,
      ...schedule,
      prediction_type: pick(r, TARGETS),
      rescale_betas_zero_snr: r() < 0.4,
      timestep_spacing: pick(r, SPACINGS),
      steps_offset: r() < 0.5 ? 1 : 0,
    },
    sampler: pick(r, SAMPLERS),
    num_inference_steps: pick(r, [4, 8, 20, 30, 50]),
    guidance_scale: guidance,
    output: { folder: `/renders/lanternfish/${i}`, format: 'png', seed: Math.floor(r() * 100000), batch: pick(r, [1, 4]) },
    prompts: [`storyboard frame ${i}, lantern light over black water`, `product still ${i}, pure white background`],
  };
  if (r() < 0.5) cfg.guidance_rescale = pick(r, [0.0, 0.5, 0.7, 1.0]);
  if (r() < 0.2) cfg.use_karras_sigmas = true;
  return cfg;
}

function toYaml(v: Json, indent = 0): string {
  const pad = ' '.repeat(indent);
  if (Array.isArray(v)) {
    if (v.every((x) => typeof x !== 'object' || x === null)) return `[${v.map((x) => yamlScalar(x as Json)).join(', ')}]`;
    return '\n' + v.map((x) => `${pad}- ${toYaml(x, indent + 2).trimStart()}`).join('\n');
  }
  if (v !== null && typeof v === 'object') {
    return (
      '\n' +
      Object.entries(v)
        .map(([k, x]) => `${pad}${k}:${typeof x === 'object' && x !== null && !Array.isArray(x) ? '' : ' '}${toYaml(x, indent + 2)}`)
        .join('\n')
    );
  }
  return yamlScalar(v);
}

function yamlScalar(v: Json): string {
  if (typeof v === 'string') return /^[\w./-]+$/.test(v) && !/^(true|false|null|\d)/.test(v) ? v : JSON.stringify(v);
  return String(v);
}

export type CorpusFormat = 'yaml' | 'json' | 'jsonc';

export function renderConfig(cfg: Record<string, Json>, format: CorpusFormat, i: number): string {
  if (format === 'yaml') return `# Lanternfish Pictures run ${i} (invented demo data)${toYaml(cfg)}\n`;
  const json = JSON.stringify(cfg, null, 2);
  if (format === 'json') return `${json}\n`;
  return `// Lanternfish Pictures run ${i} (invented demo data)\n${json.replace(/\n(\s+)"run"/, '\n$1// which run\n$1"run"')}\n`;
}

export interface CorpusFile {
  path: string;
  format: CorpusFormat;
}

/** Writes `count` configs under `dir` (replacing what was there) and returns their paths. */
export function writeCorpus(dir: string, count: number): CorpusFile[] {
  rmSync(dir, { recursive: true, force: true });
  // The corpus lives in a git-ignored folder; discovery honours .gitignore files up to the folder
  // that holds `.git`, so an empty `.git` marks the corpus as a tree of its own.
  mkdirSync(join(dir, '.git'), { recursive: true });
  const files: CorpusFile[] = [];
  const perFolder = 20;
  for (let i = 0; i < count; i++) {
    const folder = join(dir, `batch-${String(Math.floor(i / perFolder)).padStart(4, '0')}`);
    if (i % perFolder === 0) mkdirSync(folder, { recursive: true });
    const u = (i * 2654435761) % 10;
    const format: CorpusFormat = u < 6 ? 'yaml' : u < 9 ? 'json' : 'jsonc';
    const sampling = i % 2 === 1;
    const cfg = sampling ? samplingConfig(i) : trainingConfig(i);
    const name = `${sampling ? 'sample' : 'train'}-${SUBJECTS[Math.floor(i / 2) % SUBJECTS.length]}-${Math.floor(i / 2)}.${format}`;
    const path = join(folder, name);
    writeFileSync(path, renderConfig(cfg, format, i));
    files.push({ path, format });
  }
  return files;
}

// ------------------------------------------------------------------------------------------------
// A monorepo-like tree: mostly configs that are not diffusion configs (service manifests, package
// manifests, CI workflows, compose files, configs of other models), with about one file in ten a
// diffusion training or sampling config. Checking it measures how cheaply the tool passes over
// everything it has nothing to say about.

function serviceManifest(i: number, r: () => number): string {
  const name = `lanternfish-svc-${i}`;
  return `# service ${i} (invented demo data)
apiVersion: apps/v1
kind: Deployment
metadata:
  name: ${name}
  labels:
    app: ${name}
    team: render-farm
spec:
  replicas: ${1 + Math.floor(r() * 6)}
  selector:
    matchLabels:
      app: ${name}
  template:
    metadata:
      labels:
        app: ${name}
    spec:
      containers:
        - name: ${name}
          image: registry.lanternfish.example/${name}:1.${i % 40}.${Math.floor(r() * 10)}
          ports:
            - containerPort: ${8000 + (i % 100)}
          env:
            - name: LOG_LEVEL
              value: info
            - name: QUEUE_URL
              value: "amqp://queue.lanternfish.example:5672/frames"
          resources:
            limits:
              cpu: "${1 + Math.floor(r() * 4)}"
              memory: ${pick(r, ['512Mi', '1Gi', '4Gi'])}
          readinessProbe:
            httpGet:
              path: /healthz
              port: ${8000 + (i % 100)}
            initialDelaySeconds: 5
            periodSeconds: 10
---
apiVersion: v1
kind: Service
metadata:
  name: ${name}
spec:
  selector:
    app: ${name}
  ports:
    - port: 80
      targetPort: ${8000 + (i % 100)}
`;
}

function packageManifest(i: number, r: () => number): string {
  const deps: Record<string, string> = {};
  for (let k = 0; k < 3 + Math.floor(r() * 8); k++) deps[`@lanternfish/lib-${(i + k * 7) % 90}`] = `1.${k}.${Math.floor(r() * 20)}`;
  return `${JSON.stringify(
    {
      name: `@lanternfish/pkg-${i}`,
      version: `0.${i % 30}.${Math.floor(r() * 10)}`,
      private: true,
      main: 'dist/index.js',
      scripts: { build: 'tsc -b', test: 'vitest run', lint: 'eslint src' },
      dependencies: deps,
      devDependencies: { typescript: '5.9.3', vitest: '4.1.12' },
    },
    null,
    2,
  )}\n`;
}

function workflow(i: number, r: () => number): string {
  return `name: build-${i}
on:
  push:
    branches: [main]
  pull_request:
jobs:
  test:
    runs-on: ubuntu-latest
    timeout-minutes: ${10 + Math.floor(r() * 30)}
    strategy:
      matrix:
        node: [18, 20, 22]
    steps:
      - uses: actions/checkout@v4
      - name: Install
        run: npm ci
      - name: Test
        run: npm test -- --shard=${1 + (i % 4)}/4
      - name: Upload frames
        if: always()
        run: ./scripts/upload.sh renders/${i}
`;
}

function composeFile(i: number, r: () => number): string {
  return `services:
  render-${i}:
    image: registry.lanternfish.example/render:${i % 12}
    restart: unless-stopped
    environment:
      FRAME_QUEUE: frames-${i}
      WORKERS: "${1 + Math.floor(r() * 8)}"
    volumes:
      - ./renders:/renders
    depends_on:
      - queue
  queue:
    image: registry.lanternfish.example/queue:3
    ports:
      - "${5672 + (i % 10)}:5672"
`;
}

/** Configs of models that are not diffusion models (a caption classifier, a tokenizer, a tagger). */
function otherModelConfig(i: number, r: () => number): Record<string, Json> {
  return {
    experiment: `lanternfish-caption-tagger-${i}`,
    model: {
      arch: pick(r, ['resnet50', 'vit_small', 'bert_base']),
      hidden_size: pick(r, [256, 512, 768]),
      num_layers: pick(r, [4, 6, 12]),
      dropout: 0.1,
    },
    optimizer: { name: 'adamw', lr: pick(r, [1e-4, 3e-4]), weight_decay: 0.01, betas: [0.9, 0.999] },
    trainer: {
      max_epochs: pick(r, [10, 30, 90]),
      batch_size: pick(r, [32, 64, 128]),
      precision: pick(r, ['16-mixed', 'bf16-mixed']),
      accumulate_grad_batches: 1,
    },
    data: { train: `/data/lanternfish/tags/train-${i}.jsonl`, val: `/data/lanternfish/tags/val-${i}.jsonl`, num_workers: 8, max_length: 128 },
    tokenizer: { vocab_size: 32000, lowercase: r() < 0.5, special_tokens: ['<pad>', '<unk>', '<s>', '</s>'] },
  };
}

export interface MonorepoMix {
  diffusion: number;
  other: number;
}

/**
 * Writes a monorepo-like tree of `count` files under `dir`: about 10% diffusion configs (in
 * `models/<n>/`, paired training and sampling files), the rest service manifests, package
 * manifests, CI workflows, compose files and configs of other models.
 */
export function writeMonorepo(dir: string, count: number): { files: CorpusFile[]; mix: MonorepoMix } {
  rmSync(dir, { recursive: true, force: true });
  mkdirSync(join(dir, '.git'), { recursive: true });
  const files: CorpusFile[] = [];
  const made = new Set<string>();
  const folder = (f: string) => {
    const p = join(dir, f);
    if (!made.has(p)) {
      mkdirSync(p, { recursive: true });
      made.add(p);
    }
    return p;
  };
  const mix: MonorepoMix = { diffusion: 0, other: 0 };
  for (let i = 0; i < count; i++) {
    const r = rng(i * 31337 + 11);
    const u = i % 10;
    const group = Math.floor(i / 10);
    let path: string;
    let text: string;
    let format: CorpusFormat = 'yaml';
    if (u === 0) {
      // Diffusion configs: a training file and its sampling file side by side.
      const sampling = group % 2 === 1;
      const model = Math.floor(group / 2);
      format = model % 3 === 2 ? 'json' : 'yaml';
      const cfg = sampling ? samplingConfig(i) : trainingConfig(i);
      path = join(folder(`models/m${model}`), `${sampling ? 'sample' : 'train'}-${SUBJECTS[model % SUBJECTS.length]}.${format}`);
      text = renderConfig(cfg, format, i);
      mix.diffusion++;
    } else {
      mix.other++;
      const pkg = `packages/p${Math.floor(group / 4)}`;
      switch (u) {
        case 1:
        case 2:
        case 3:
          path = join(folder(`deploy/k8s/${Math.floor(group / 8)}`), `svc-${i}.yaml`);
          text = serviceManifest(i, r);
          break;
        case 4:
        case 5:
          format = 'json';
          path = join(folder(`${pkg}/m${i}`), 'package.json');
          text = packageManifest(i, r);
          break;
        case 6:
          path = join(folder(`.github/workflows/${Math.floor(group / 16)}`), `build-${i}.yml`);
          text = workflow(i, r);
          break;
        case 7:
          path = join(folder(`${pkg}/compose`), `compose-${i}.yaml`);
          text = composeFile(i, r);
          break;
        default: {
          format = u === 8 ? 'yaml' : 'json';
          const cfg = otherModelConfig(i, r);
          path = join(folder(`research/taggers/${Math.floor(group / 8)}`), `tagger-${i}.${format}`);
          text = format === 'yaml' ? `# tagger run ${i} (invented demo data)${toYaml(cfg)}\n` : `${JSON.stringify(cfg, null, 2)}\n`;
        }
      }
    }
    writeFileSync(path, text);
    files.push({ path, format });
  }
  return { files, mix };
}
