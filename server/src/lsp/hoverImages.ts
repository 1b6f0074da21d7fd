/**
 * Whether hovers carry the embedded log-SNR chart. There is no LSP capability for images in
 * markdown: a client that renders markdown may still show a data URI as kilobytes of base64
 * text. So the chart goes only to clients that render markdown and are known to show such images
 * (the VS Code family, by its `clientInfo` name), unless the client says otherwise in
 * `initializationOptions` (`{ "hover": { "images": true | false } }`) or the `noiselint.hover.images`
 * setting (true | false | "auto").
 */
import type { InitializeParams } from 'vscode-languageserver/node';

/** Editors that render data-URI images in hover markdown. */
const IMAGE_CLIENTS = /^(visual studio code|vscodium|code - oss|code-server)\b/i;

export type HoverImagesSetting = boolean | 'auto';

function initOption(params: Pick<InitializeParams, 'initializationOptions'> | undefined): boolean | undefined {
  const raw = params?.initializationOptions as Record<string, unknown> | undefined;
  if (!raw || typeof raw !== 'object') return undefined;
  const nested = raw.hover && typeof raw.hover === 'object' ? (raw.hover as Record<string, unknown>).images : undefined;
  const value = nested ?? raw['hover.images'];
  return typeof value === 'boolean' ? value : undefined;
}

/** The default for this client, read once at initialize. */
export function clientShowsHoverImages(params: Pick<InitializeParams, 'capabilities' | 'clientInfo' | 'initializationOptions'> | undefined): boolean {
  const formats = params?.capabilities?.textDocument?.hover?.contentFormat ?? [];
  if (!formats.includes('markdown')) return false;
  const asked = initOption(params);
  if (asked !== undefined) return asked;
  const name = params?.clientInfo?.name;
  return typeof name === 'string' && IMAGE_CLIENTS.test(name.trim());
}

/** A per-document setting over the client's default; never an image to a plain-text client. */
export function hoverImages(setting: HoverImagesSetting, clientDefault: boolean, markdown: boolean): boolean {
  if (!markdown) return false;
  return setting === 'auto' ? clientDefault : setting;
}
