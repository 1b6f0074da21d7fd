/**
 * `check --format sarif`: SARIF 2.1.0 (OASIS). One run; the driver lists every rule with its
 * documentation; lines and columns are 1-based, columns count UTF-16 code units.
 */
import { ruleDocs } from '../../rules/docs';
import { createHash } from 'node:crypto';
import { pathToFileURL } from 'node:url';
import { HOMEPAGE } from '../../base/version';
import { ruleDocsUrl } from '../../workspace/ruleDocs';
import type { Severity } from '../../base/findings';
import type { RuleMeta } from '../../rules/types';
import { displayPath, Locator, type CheckReport, type Range } from './report';

export const SARIF_SCHEMA_URI = 'https://docs.oasis-open.org/sarif/sarif/v2.1.0/os/schemas/sarif-schema-2.1.0.json';
const SRCROOT = '%SRCROOT%';

export interface SarifToolInfo {
  version: string;
  rules: readonly RuleMeta[];
  /** https base of the rule pages (`<base>/<id>.md`); without one, no helpUri is written. */
  docsBase?: string;
}

type SarifLevel = 'error' | 'warning' | 'note';
const LEVEL: Record<Severity, SarifLevel> = { error: 'error', warning: 'warning', info: 'note', hint: 'note' };

interface Region {
  startLine: number;
  startColumn: number;
  endLine: number;
  endColumn: number;
}

function region(r: Range): Region {
  return { startLine: r.start.line + 1, startColumn: r.start.character + 1, endLine: r.end.line + 1, endColumn: r.end.character + 1 };
}

/** A relative path as a URI reference: each segment percent-encoded. */
function uriOf(displayed: string): string {
  return displayed.split('/').map(encodeURIComponent).join('/');
}

/** What a rule finds: the first paragraph under "What triggers it", as plain text. */
function fullDescription(meta: RuleMeta): string {
  const match = /##\s*What triggers it\s*\n+([\s\S]*?)(\n\s*\n|\n##|$)/.exec(meta.docs);
  const text = (match ? match[1]! : meta.summary).replace(/\s*\n\s*/g, ' ').trim();
  return text || meta.summary;
}

function plainHelp(meta: RuleMeta): string {
  return `${meta.summary}\n\n${ruleDocs(meta)
    .replace(/^#+\s*/gm, '')
    .trim()}`;
}

function helpUri(ruleId: string, base: string | undefined): { helpUri?: string } {
  const url = ruleDocsUrl(ruleId, base);
  return url ? { helpUri: url } : {};
}

/** Key of our fingerprint in `partialFingerprints` (versioned: a new way of computing it gets a new key). */
export const FINGERPRINT_KEY = 'noiselintFindingHash/v1';

/**
 * A finding's identity across runs, independent of its line: the rule, the file, the YAML document,
 * the text under the finding (whitespace collapsed) and, for identical ones, their order in the file.
 * Moving the lines around keeps it; editing the flagged value or renaming the file makes a new one.
 */
function fingerprinter(): (rule: string, uri: string, documentIndex: number, flagged: string) => string {
  const seen = new Map<string, number>();
  return (rule, uri, documentIndex, flagged) => {
    const base = [rule, uri, String(documentIndex), flagged.replace(/\s+/g, ' ').trim()].join('\u0000');
    const n = seen.get(base) ?? 0;
    seen.set(base, n + 1);
    return createHash('sha256').update(`${base}\u0000${n}`).digest('hex').slice(0, 32);
  };
}

export function toSarif(report: CheckReport, tool: SarifToolInfo): Record<string, unknown> {
  const locate = new Locator(report);
  const descriptors: Record<string, unknown>[] = [];
  const ruleIndex = new Map<string, number>();
  for (const meta of tool.rules) {
    ruleIndex.set(meta.id, descriptors.length);
    descriptors.push({
      id: meta.id,
      shortDescription: { text: meta.summary },
      fullDescription: { text: fullDescription(meta) },
      help: { text: plainHelp(meta), markdown: ruleDocs(meta) || meta.summary },
      ...helpUri(meta.id, tool.docsBase),
      defaultConfiguration: { level: LEVEL[meta.defaultSeverity] },
      properties: {
        repairEffects: meta.repair ? [...meta.repair.effects] : [],
        repairForEveryFinding: meta.repair?.everyFinding ?? false,
        defaultSeverity: meta.defaultSeverity,
      },
    });
  }
  const location = (path: string, range: Range) => ({
    physicalLocation: {
      artifactLocation: { uri: uriOf(displayPath(report.cwd, path)), uriBaseId: SRCROOT },
      region: region(range),
    },
  });
  const results: Record<string, unknown>[] = [];
  const fingerprint = fingerprinter();
  for (const file of report.files) {
    const text = locate.textOf(file.path) ?? '';
    for (const f of file.findings) {
      if (!ruleIndex.has(f.rule)) {
        // A finding from outside the rule list (a parse problem): describe it minimally.
        ruleIndex.set(f.rule, descriptors.length);
        descriptors.push({ id: f.rule, shortDescription: { text: f.rule } });
      }
      const result: Record<string, unknown> = {
        ruleId: f.rule,
        ruleIndex: ruleIndex.get(f.rule),
        level: LEVEL[f.severity],
        message: { text: f.message },
        locations: [location(file.path, locate.range(file.path, f.span))],
        partialFingerprints: {
          [FINGERPRINT_KEY]: fingerprint(f.rule, displayPath(report.cwd, file.path), f.documentIndex, text.slice(f.span.start, f.span.end)),
        },
      };
      if (f.related.length) {
        result.relatedLocations = f.related.map((r, i) => {
          const path = locate.resolvePath(file.path, r.path);
          return { id: i + 1, ...location(path, locate.range(path, r.span)), message: { text: r.message } };
        });
      }
      if (f.fixes.length) {
        result.fixes = f.fixes.map((fix) => ({
          description: { text: fix.title },
          artifactChanges: [
            {
              artifactLocation: { uri: uriOf(displayPath(report.cwd, file.path)), uriBaseId: SRCROOT },
              replacements: fix.edits.map((e) => ({
                deletedRegion: region(locate.range(file.path, e.span)),
                insertedContent: { text: e.newText },
              })),
            },
          ],
          properties: { effect: fix.effect, touchesComment: fix.touchesComment, preferred: fix.preferred },
        }));
      }
      results.push(result);
    }
  }
  const notifications = [
    ...report.notices.map((n) => ({ level: n.level, message: { text: n.message } })),
    ...report.skipped.map((s) => ({ level: 'note', message: { text: `${displayPath(report.cwd, s.path)}: ${s.reason}` } })),
  ];
  return {
    $schema: SARIF_SCHEMA_URI,
    version: '2.1.0',
    runs: [
      {
        tool: {
          driver: {
            name: 'noiselint',
            version: tool.version,
            semanticVersion: tool.version,
            informationUri: HOMEPAGE,
            rules: descriptors,
          },
        },
        originalUriBaseIds: { [SRCROOT]: { uri: pathToFileURL(report.cwd.endsWith('/') ? report.cwd : `${report.cwd}/`).href } },
        columnKind: 'utf16CodeUnits',
        invocations: [
          {
            executionSuccessful: !report.notices.some((n) => n.level === 'error'),
            ...(notifications.length ? { toolExecutionNotifications: notifications } : {}),
          },
        ],
        results,
      },
    ],
  };
}

export function formatSarif(report: CheckReport, tool: SarifToolInfo): string {
  return `${JSON.stringify(toSarif(report, tool), null, 2)}\n`;
}
