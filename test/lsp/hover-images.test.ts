/**
 * Hover content follows the client, over the real server process: the embedded chart goes only to
 * clients that render markdown and show images (the VS Code family by its clientInfo name), unless
 * initializationOptions or the `hover.images` setting say otherwise; plain-text clients never get
 * it. Everyone gets the numbers.
 */
import { afterEach, describe, expect, it } from 'vitest';
import type { ClientCapabilities, Hover, MarkupContent } from 'vscode-languageserver-protocol';
import { DEFAULT_CAPABILITIES, LspClient, type StartOptions } from './harness';
import { TRAIN_LEAKY, positionOf } from './fixtures';

const uri = 'untitled:/lanternfish/hover-images.yaml';
let client: LspClient | undefined;

afterEach(async () => {
  await client?.stop();
  client = undefined;
});

async function hoverWith(options: StartOptions): Promise<MarkupContent> {
  client = await LspClient.start(options);
  const since = client.diagnostics.length;
  client.open(uri, TRAIN_LEAKY);
  await client.waitForDiagnostics(uri, (p) => p.version === 1, since);
  const hover = await client.request<Hover | null>('textDocument/hover', {
    textDocument: { uri },
    position: positionOf(TRAIN_LEAKY, 'beta_schedule', 3),
  });
  expect(hover).not.toBeNull();
  const content = hover!.contents as MarkupContent;
  // Lin et al. 2023, Table 1 (recalled from memory): sqrt(abar_T) = 0.068265 for this schedule.
  expect(content.value).toContain('0.0683');
  return content;
}

const plainOnly: ClientCapabilities = {
  ...DEFAULT_CAPABILITIES,
  textDocument: { ...DEFAULT_CAPABILITIES.textDocument, hover: { contentFormat: ['plaintext'] } },
};

describe('hover images follow the client', () => {
  it('a markdown client that is not known to show images gets the table without the base64 chart', async () => {
    const content = await hoverWith({ clientInfo: { name: 'Neovim', version: '0.11.2' } });
    expect(content.kind).toBe('markdown');
    expect(content.value).toContain('| current |');
    expect(content.value).not.toContain('data:image');
    expect(content.value.length).toBeLessThan(2000);
  });

  it('a VS Code family client gets the chart', async () => {
    const content = await hoverWith({ clientInfo: { name: 'Visual Studio Code', version: '1.99.0' } });
    expect(content.value).toMatch(/!\[[^\]]*\]\(data:image\/svg\+xml;base64,/);
  });

  it('initializationOptions turn the chart on or off', async () => {
    expect((await hoverWith({ clientInfo: { name: 'Neovim' }, initializationOptions: { hover: { images: true } } })).value).toContain(
      'data:image/svg+xml',
    );
    await client?.stop();
    expect((await hoverWith({ clientInfo: { name: 'code-server' }, initializationOptions: { hover: { images: false } } })).value).not.toContain(
      'data:image',
    );
  });

  it('the hover.images setting overrides the client default per document', async () => {
    const content = await hoverWith({ clientInfo: { name: 'Visual Studio Code' }, settings: () => ({ hover: { images: false } }) });
    expect(content.kind).toBe('markdown');
    expect(content.value).not.toContain('data:image');
  });

  it('a plain-text client gets plain text and never an image, whatever it asks', async () => {
    const content = await hoverWith({
      capabilities: plainOnly,
      clientInfo: { name: 'Visual Studio Code' },
      initializationOptions: { hover: { images: true } },
    });
    expect(content.kind).toBe('plaintext');
    expect(content.value).not.toContain('data:image');
    expect(content.value).not.toContain('|');
  });
});
