/**
 * The `noiselint.*` editor settings: defaults, validation of what the client sends (anything
 * malformed falls back to the default, field by field), and merging over a project file.
 */
import { SEVERITIES, type Severity } from '../base/findings';
import type { ParseLimits } from '../parse/types';
import type { ResolvedProject, RuleSetting } from '../workspace/types';

export interface EditorSettings {
  enable: boolean;
  /** Severity per rule id ('off' disables the rule). Overrides the project file. */
  rules: Record<string, Severity | 'off'>;
  /** Rule options per rule id. Overrides the project file. */
  thresholds: Record<string, Record<string, number | string | boolean>>;
  files: { include: string[]; exclude: string[] };
  limits: Partial<ParseLimits>;
  /** Quiet time after the last edit before a document is checked. */
  debounceMs: number;
  /** https base URL of the rule pages (`<base>/<id>.md`); empty or not https: no links. */
  docsBaseUrl: string;
  /** Embedded chart in hovers: 'auto' follows the client (lsp/hoverImages.ts). */
  hover: { images: boolean | 'auto' };
}

export const DEFAULT_DEBOUNCE_MS = 150;
const MAX_DEBOUNCE_MS = 10_000;

export function defaultSettings(): EditorSettings {
  return {
    enable: true,
    rules: {},
    thresholds: {},
    files: { include: [], exclude: [] },
    limits: {},
    debounceMs: DEFAULT_DEBOUNCE_MS,
    docsBaseUrl: '',
    hover: { images: 'auto' },
  };
}

function isRecord(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

function stringList(v: unknown): string[] {
  return Array.isArray(v) ? v.filter((x): x is string => typeof x === 'string' && x.length > 0) : [];
}

const LIMIT_KEYS: (keyof ParseLimits)[] = ['maxFileBytes', 'maxNesting', 'maxListLength', 'maxAliasCount'];

/** Accepts the `noiselint` section as VS Code sends it (nested objects) or with dotted keys. */
export function normalizeSettings(raw: unknown): EditorSettings {
  const out = defaultSettings();
  if (!isRecord(raw)) return out;
  const get = (dotted: string): unknown => {
    if (dotted in raw) return raw[dotted];
    let cur: unknown = raw;
    for (const part of dotted.split('.')) {
      if (!isRecord(cur)) return undefined;
      cur = cur[part];
    }
    return cur;
  };
  const enable = get('enable');
  if (typeof enable === 'boolean') out.enable = enable;
  const rules = get('rules');
  if (isRecord(rules)) {
    for (const [id, sev] of Object.entries(rules)) {
      const value = isRecord(sev) ? sev.severity : sev;
      if (typeof value === 'string' && (value === 'off' || (SEVERITIES as readonly string[]).includes(value))) {
        out.rules[id] = value as Severity | 'off';
      }
    }
  }
  const thresholds = get('thresholds');
  if (isRecord(thresholds)) {
    for (const [id, opts] of Object.entries(thresholds)) {
      if (!isRecord(opts)) continue;
      const clean: Record<string, number | string | boolean> = {};
      for (const [name, v] of Object.entries(opts)) {
        if ((typeof v === 'number' && Number.isFinite(v)) || typeof v === 'string' || typeof v === 'boolean') clean[name] = v;
      }
      out.thresholds[id] = clean;
    }
  }
  out.files.include = stringList(get('files.include'));
  out.files.exclude = stringList(get('files.exclude'));
  const limits = get('limits');
  if (isRecord(limits)) {
    for (const key of LIMIT_KEYS) {
      const v = limits[key];
      if (typeof v === 'number' && Number.isInteger(v) && v >= 0) out.limits[key] = v;
    }
  }
  const debounce = get('debounceMs');
  if (typeof debounce === 'number' && Number.isFinite(debounce) && debounce >= 0) out.debounceMs = Math.min(debounce, MAX_DEBOUNCE_MS);
  const docs = get('docsBaseUrl');
  if (typeof docs === 'string') out.docsBaseUrl = docs.trim();
  const images = get('hover.images');
  if (typeof images === 'boolean' || images === 'auto') out.hover.images = images;
  return out;
}

/** The project file's settings with the editor's rule severities, options and limits on top. */
export function mergeSettingsIntoProject(project: ResolvedProject, settings: EditorSettings): ResolvedProject {
  // Both are kept unchanged while they are current (settings per document, projects per folder):
  // every change of a document reuses one merged project, and what is cached by project with it.
  let bySettings = merged.get(project);
  if (!bySettings) {
    bySettings = new WeakMap();
    merged.set(project, bySettings);
  }
  let out = bySettings.get(settings);
  if (!out) {
    out = mergeUncached(project, settings);
    bySettings.set(settings, out);
  }
  return out;
}

const merged = new WeakMap<ResolvedProject, WeakMap<EditorSettings, ResolvedProject>>();

function mergeUncached(project: ResolvedProject, settings: EditorSettings): ResolvedProject {
  const rules: Record<string, RuleSetting> = {};
  for (const [id, setting] of Object.entries(project.rules))
    rules[id] = { ...setting, options: setting.options ? { ...setting.options } : undefined };
  for (const [id, severity] of Object.entries(settings.rules)) rules[id] = { ...rules[id], severity };
  for (const [id, options] of Object.entries(settings.thresholds)) {
    rules[id] = { ...rules[id], options: { ...rules[id]?.options, ...options } };
  }
  return { ...project, rules, limits: { ...project.limits, ...settings.limits } };
}

/** The settings section the server reads (`noiselint`). */
export const SETTINGS_SECTION = 'noiselint';

/** How long to wait for a workspace/configuration answer before using the pushed settings. */
export const CONFIGURATION_TIMEOUT_MS = 3000;

function isPlainRecord(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

/** The `noiselint` section of what a client sent: `{ noiselint: {...} }`, or the section itself. */
function sectionOf(raw: unknown): Record<string, unknown> | undefined {
  if (!isPlainRecord(raw)) return undefined;
  const inner = raw[SETTINGS_SECTION];
  return isPlainRecord(inner) ? inner : raw;
}

/**
 * Settings a client sends without being asked, for clients that never answer
 * workspace/configuration (or answer it with nothing): the `initializationOptions` of initialize
 * and the `settings` of workspace/didChangeConfiguration, either as `{ noiselint: {...} }` or as
 * the section itself. A later didChangeConfiguration replaces what came before it.
 */
export class PushedSettings {
  private raw: Record<string, unknown> | undefined;
  private cached: EditorSettings | undefined;

  initialize(initializationOptions: unknown): void {
    this.raw = sectionOf(initializationOptions);
    this.cached = undefined;
  }

  /**
   * `settings` of workspace/didChangeConfiguration. `{ noiselint: ... }` replaces the settings (an
   * empty section restores the defaults); a bare non-empty object is taken as the section itself;
   * a notification without settings (null, {}) only says "ask again" and keeps what was pushed.
   */
  changed(settings: unknown): void {
    if (!isPlainRecord(settings)) return;
    if (SETTINGS_SECTION in settings) {
      const inner = settings[SETTINGS_SECTION];
      this.raw = isPlainRecord(inner) ? inner : {};
    } else if (Object.keys(settings).length > 0) {
      this.raw = settings;
    } else {
      return;
    }
    this.cached = undefined;
  }

  current(): EditorSettings {
    this.cached ??= normalizeSettings(this.raw ?? {});
    return this.cached;
  }
}

/**
 * The settings for one document. `ask` sends workspace/configuration (null when the client does
 * not support it). An answer that is not a settings object (null: the client has none), an error,
 * or no answer within `timeoutMs` falls back to the pushed settings.
 */
export function settingsFromClient(
  ask: (() => Promise<unknown>) | null,
  pushed: PushedSettings,
  onError: (err: unknown) => void = () => {},
  timeoutMs = CONFIGURATION_TIMEOUT_MS,
): Promise<EditorSettings> {
  if (!ask) return Promise.resolve(pushed.current());
  return new Promise<EditorSettings>((done) => {
    let settled = false;
    const finish = (s: EditorSettings) => {
      if (settled) return;
      settled = true;
      clearTimeout(timer);
      done(s);
    };
    const timer = setTimeout(() => finish(pushed.current()), timeoutMs);
    ask().then(
      (answer) => {
        const section = Array.isArray(answer) ? answer[0] : answer;
        finish(isPlainRecord(section) && Object.keys(section).length > 0 ? normalizeSettings(section) : pushed.current());
      },
      (err: unknown) => {
        onError(err);
        finish(pushed.current());
      },
    );
  });
}
