/** What the client can do, read once at initialize: the server sends only what it can show. */
import type { ClientCapabilities, InitializeParams } from 'vscode-languageserver/node';
import { clientShowsHoverImages } from './hoverImages';

export interface Capabilities {
  pullDiagnostics: boolean;
  diagnosticRefresh: boolean;
  configuration: boolean;
  configurationDynamic: boolean;
  watchedFilesDynamic: boolean;
  workspaceFolders: boolean;
  hoverMarkdown: boolean;
  /** The client's default for the hover chart (lsp/hoverImages.ts). */
  hoverImages: boolean;
  versionedEdits: boolean;
  inlayHintRefresh: boolean;
  codeLensRefresh: boolean;
  /** WorkspaceEdit change annotations (needsConfirmation). */
  changeAnnotations: boolean;
}

export const NO_CAPABILITIES: Capabilities = {
  pullDiagnostics: false,
  diagnosticRefresh: false,
  configuration: false,
  configurationDynamic: false,
  watchedFilesDynamic: false,
  workspaceFolders: false,
  hoverMarkdown: false,
  hoverImages: false,
  versionedEdits: false,
  inlayHintRefresh: false,
  codeLensRefresh: false,
  changeAnnotations: false,
};

export function readCapabilities(cc: ClientCapabilities, init?: Pick<InitializeParams, 'clientInfo' | 'initializationOptions'>): Capabilities {
  const hoverFormats = cc.textDocument?.hover?.contentFormat ?? [];
  return {
    pullDiagnostics: !!cc.textDocument?.diagnostic,
    diagnosticRefresh: !!cc.workspace?.diagnostics?.refreshSupport,
    configuration: !!cc.workspace?.configuration,
    configurationDynamic: !!cc.workspace?.didChangeConfiguration?.dynamicRegistration,
    watchedFilesDynamic: !!cc.workspace?.didChangeWatchedFiles?.dynamicRegistration,
    workspaceFolders: !!cc.workspace?.workspaceFolders,
    hoverMarkdown: hoverFormats.includes('markdown'),
    hoverImages: clientShowsHoverImages({ capabilities: cc, clientInfo: init?.clientInfo, initializationOptions: init?.initializationOptions }),
    versionedEdits: !!cc.workspace?.workspaceEdit?.documentChanges,
    inlayHintRefresh: !!cc.workspace?.inlayHint?.refreshSupport,
    codeLensRefresh: !!cc.workspace?.codeLens?.refreshSupport,
    changeAnnotations: !!cc.workspace?.workspaceEdit?.changeAnnotationSupport,
  };
}
