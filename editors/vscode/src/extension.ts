// VS Code glue for the rill language server (`rill lsp` on stdio).
// Everything the language knows (diagnostics, hover, inlay hints, the
// "Run case" code lens) lives in the server; this file only starts it,
// passes the `rill.*` settings along and opens the report after a run (in
// the system browser, or in a VS Code tab where the browser cannot reach the
// file: a browser or remote VS Code).
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';
import * as vscode from 'vscode';
import {
  CancellationToken,
  DidChangeConfigurationNotification,
  ExecuteCommandRequest,
  LanguageClient,
  LanguageClientOptions,
  ResponseError,
  ServerOptions,
} from 'vscode-languageclient/node';

/** The settings object the server expects, under the section `rill`. */
export interface RillSettings {
  inlayHints: { enabled: boolean };
  allowedIncludePaths: string[];
  runOutputDir: string | null;
}

/** The server-side command that runs a case; its argument is the document URI. */
export const SERVER_RUN_COMMAND = 'rill.run';

/** How long the fallback waits for report.html after a run was started. */
const REPORT_WAIT_MS = 30 * 60 * 1000;
/** Grace time for the server's own window/showDocument before the fallback offers the report. */
const SHOW_DOCUMENT_GRACE_MS = 3000;

let client: LanguageClient | undefined;
let output: vscode.OutputChannel | undefined;
/** Last report opened through the server's window/showDocument (ms since epoch). */
let lastReportShownAt = 0;
/** Bumped at each run so that an older run's fallback stops waiting. */
let runGeneration = 0;

export function readSettings(): RillSettings {
  const c = vscode.workspace.getConfiguration('rill');
  const dir = c.get<string | null>('runOutputDir', null);
  const includes = c.get<string[]>('allowedIncludePaths', []);
  return {
    inlayHints: { enabled: c.get<boolean>('inlayHints.enabled', true) !== false },
    allowedIncludePaths: Array.isArray(includes) ? includes.filter((p) => typeof p === 'string') : [],
    runOutputDir: typeof dir === 'string' && dir.trim() !== '' ? dir : null,
  };
}

/** `rill.path`, with `~` expanded and a relative path with a separator taken from the first workspace folder. */
export function serverCommand(): string {
  const configured = (vscode.workspace.getConfiguration('rill').get<string>('path', 'rill') || 'rill').trim();
  let p = configured === '' ? 'rill' : configured;
  if (p === '~' || p.startsWith('~/')) {
    p = path.join(os.homedir(), p.slice(1));
  }
  const hasSeparator = p.includes('/') || p.includes('\\');
  const folder = vscode.workspace.workspaceFolders?.[0];
  if (hasSeparator && !path.isAbsolute(p) && folder && folder.uri.scheme === 'file') {
    p = path.join(folder.uri.fsPath, p);
  }
  return p;
}

/**
 * Where a run writes report.html for a deck, as the server places it:
 * `<runOutputDir>/<deck name>.out/` when the setting is given (a relative
 * folder is taken from the first workspace folder, else the deck's folder),
 * otherwise `<deck name>.out/` beside the deck.
 */
export function expectedReportPath(deckPath: string, settings: RillSettings, workspaceRoot?: string): string {
  const deckDir = path.dirname(deckPath);
  const stem = path.basename(deckPath).replace(/\.rill$/i, '');
  const parent = settings.runOutputDir ? path.resolve(workspaceRoot ?? deckDir, settings.runOutputDir) : deckDir;
  return path.join(parent, `${stem}.out`, 'report.html');
}

function workspaceRoot(): string | undefined {
  const folder = vscode.workspace.workspaceFolders?.[0];
  return folder && folder.uri.scheme === 'file' ? folder.uri.fsPath : undefined;
}

/** A report path the server may return from `rill.run` (a string, or an object with `report`). */
function reportFromResult(result: unknown): string | undefined {
  let value: unknown = result;
  if (value && typeof value === 'object') {
    const o = value as Record<string, unknown>;
    value = o.report ?? o.reportUri ?? o.report_uri;
  }
  if (typeof value !== 'string' || !/\.html?$/i.test(value)) {
    return undefined;
  }
  return value.startsWith('file:') ? vscode.Uri.parse(value).fsPath : value;
}

/**
 * Whether the system browser can open a file of the machine the extension
 * runs on: only with a desktop VS Code on that same machine. In a VS Code
 * that runs in a browser (code-server) or a remote window (SSH, containers,
 * WSL) the UI is on another machine than the file, and openExternal of a
 * file: URI cannot reach it (a browser VS Code even navigates its own page
 * towards it).
 */
export function systemBrowserReachesFiles(): boolean {
  return vscode.env.uiKind !== vscode.UIKind.Web && !vscode.env.remoteName;
}

/** Report tabs by report path: a new run of the same deck refreshes its tab. */
const reportPanels = new Map<string, vscode.WebviewPanel>();

/** The tab title of a report: `rill report: <deck name>`. */
export function reportTitle(reportPath: string): string {
  return `rill report: ${path.basename(path.dirname(reportPath)).replace(/\.out$/i, '')}`;
}

/** Shows report.html in a VS Code tab (the page is self-contained and needs no scripts). */
function showReportInTab(reportPath: string): boolean {
  let html: string;
  try {
    html = fs.readFileSync(reportPath, 'utf8');
  } catch (err) {
    void vscode.window.showErrorMessage(`rill: cannot read ${reportPath}: ${err instanceof Error ? err.message : String(err)}`);
    return false;
  }
  let panel = reportPanels.get(reportPath);
  if (panel) {
    panel.reveal(undefined, true);
  } else {
    panel = vscode.window.createWebviewPanel(
      'rill.report',
      reportTitle(reportPath),
      { viewColumn: vscode.ViewColumn.Beside, preserveFocus: true },
      { enableScripts: false, enableFindWidget: true },
    );
    const created = panel;
    reportPanels.set(reportPath, created);
    created.onDidDispose(() => {
      if (reportPanels.get(reportPath) === created) {
        reportPanels.delete(reportPath);
      }
    });
  }
  panel.webview.html = html;
  log(`report shown in a tab: ${reportPath}`);
  return true;
}

async function openReport(uri: vscode.Uri): Promise<boolean> {
  // The page is self-contained: the system browser shows it when it can
  // reach the file, a VS Code tab otherwise.
  if (uri.scheme === 'file' && !systemBrowserReachesFiles()) {
    return showReportInTab(uri.fsPath);
  }
  return vscode.env.openExternal(uri);
}

function log(message: string): void {
  output?.appendLine(message);
}

function mtimeMs(file: string): number | undefined {
  try {
    return fs.statSync(file).mtimeMs;
  } catch {
    return undefined;
  }
}

/**
 * Fallback for servers or clients without window/showDocument: wait for a
 * report.html newer than the start of the run and offer to open it.
 */
async function offerReportWhenWritten(reportPath: string, startedAt: number, generation: number): Promise<void> {
  const deadline = Date.now() + REPORT_WAIT_MS;
  while (Date.now() < deadline && generation === runGeneration) {
    const m = mtimeMs(reportPath);
    // 2 s slack for file systems with coarse timestamps.
    if (m !== undefined && m >= startedAt - 2000) {
      await delay(SHOW_DOCUMENT_GRACE_MS);
      if (generation !== runGeneration || lastReportShownAt >= startedAt) {
        return;
      }
      const choice = await vscode.window.showInformationMessage(
        `rill: run finished, report written to ${reportPath}`,
        'Open report',
      );
      if (choice === 'Open report') {
        await openReport(vscode.Uri.file(reportPath));
      }
      return;
    }
    await delay(1000);
  }
}

function delay(ms: number): Promise<void> {
  // unref: a pending report wait never keeps a process alive on its own.
  return new Promise((resolve) => setTimeout(resolve, ms).unref?.());
}

/** Wraps one `rill.run` request: errors are shown, the report fallback is armed. */
async function afterRun(deck: vscode.Uri, run: () => Thenable<unknown>): Promise<unknown> {
  const startedAt = Date.now();
  const generation = ++runGeneration;
  let result: unknown;
  try {
    result = await run();
  } catch (err) {
    const message = err instanceof Error ? err.message : String(err);
    void vscode.window.showErrorMessage(`rill: run failed: ${message}`);
    return undefined;
  }
  if (deck.scheme === 'file') {
    const reportPath = reportFromResult(result) ?? expectedReportPath(deck.fsPath, readSettings(), workspaceRoot());
    log(`run of ${deck.fsPath} accepted; report expected at ${reportPath}`);
    void offerReportWhenWritten(reportPath, startedAt, generation);
  }
  return result;
}

function clientOptions(): LanguageClientOptions {
  return {
    documentSelector: [
      { scheme: 'file', language: 'rill' },
      { scheme: 'untitled', language: 'rill' },
    ],
    initializationOptions: readSettings(),
    outputChannel: output,
    middleware: {
      // The code lens "Run case" calls the server's command directly; it gets
      // the same error display and report fallback as the palette command.
      executeCommand: (command, args, next) => {
        const first = args[0];
        if (command === SERVER_RUN_COMMAND && typeof first === 'string') {
          return afterRun(vscode.Uri.parse(first), () => Promise.resolve(next(command, args)));
        }
        return next(command, args);
      },
      window: {
        showDocument: async (params, next) => {
          if (/\.html?$/i.test(params.uri)) {
            lastReportShownAt = Date.now();
            return { success: await openReport(vscode.Uri.parse(params.uri)) };
          }
          const shown = await next(params, CancellationToken.None);
          return shown instanceof ResponseError ? { success: false } : shown;
        },
      },
      workspace: {
        // Answer pulls of the `rill` section with the same shape as the push.
        configuration: (params, token, next) => {
          const items = params.items ?? [];
          if (items.length > 0 && items.every((item) => item.section === 'rill')) {
            return items.map(() => readSettings());
          }
          return next(params, token);
        },
      },
    },
  };
}

/** Whether `command` names an executable file, directly or on PATH. */
export function isExecutable(command: string): boolean {
  const runnable = (file: string): boolean => {
    try {
      fs.accessSync(file, fs.constants.X_OK);
      return fs.statSync(file).isFile();
    } catch {
      return false;
    }
  };
  if (command.includes('/') || command.includes('\\')) {
    return runnable(command);
  }
  const exts = process.platform === 'win32' ? (process.env.PATHEXT ?? '.EXE').split(';') : [''];
  return (process.env.PATH ?? '')
    .split(path.delimiter)
    .filter((dir) => dir !== '')
    .some((dir) => exts.some((ext) => runnable(path.join(dir, command + ext))));
}

function reportStartFailure(command: string, reason: string): void {
  log(`could not start \`${command} lsp\`: ${reason}`);
  void vscode.window
    .showErrorMessage(
      `rill: could not start the language server \`${command} lsp\` (${reason}). Install rill (cargo install --path crates/rill-cli) or set rill.path.`,
      'Open settings',
    )
    .then((choice) => {
      if (choice === 'Open settings') {
        void vscode.commands.executeCommand('workbench.action.openSettings', 'rill.path');
      }
    });
}

async function startClient(): Promise<LanguageClient | undefined> {
  const command = serverCommand();
  // Checked first so that a missing binary gives one clear message instead
  // of the client's generic "couldn't create connection".
  if (!isExecutable(command)) {
    reportStartFailure(command, 'not found or not executable');
    return undefined;
  }
  // No `transport` on purpose: with TransportKind.stdio the client appends
  // `--stdio` to the arguments, and the server's command line is exactly `rill lsp`.
  const serverOptions: ServerOptions = { command, args: ['lsp'] };
  const c = new LanguageClient('rill', 'rill language server', serverOptions, clientOptions());
  try {
    await c.start();
  } catch (err) {
    reportStartFailure(command, err instanceof Error ? err.message : String(err));
    void c.dispose().catch(() => undefined);
    return undefined;
  }
  client = c;
  return c;
}

async function stopClient(): Promise<void> {
  const c = client;
  client = undefined;
  if (c) {
    try {
      // The default 2 s: the client keeps its shutdown timer running to the end.
      await c.stop();
    } catch (err) {
      log(`stopping the server: ${err instanceof Error ? err.message : String(err)}`);
    }
  }
}

async function runCase(arg?: vscode.Uri | string): Promise<unknown> {
  const deck = typeof arg === 'string' ? vscode.Uri.parse(arg) : arg ?? vscode.window.activeTextEditor?.document.uri;
  if (!deck) {
    void vscode.window.showWarningMessage('rill: open a .rill case to run it.');
    return undefined;
  }
  // The server runs what it has analysed: the deck must be open (and saved).
  let open = vscode.workspace.textDocuments.find((d) => d.uri.toString() === deck.toString());
  if (!open) {
    try {
      open = await vscode.workspace.openTextDocument(deck);
    } catch (err) {
      void vscode.window.showErrorMessage(`rill: cannot open ${deck.fsPath}: ${err instanceof Error ? err.message : String(err)}`);
      return undefined;
    }
  }
  if (open?.isDirty) {
    await open.save();
  }
  const c = client ?? (await startClient());
  if (!c) {
    return undefined;
  }
  return afterRun(deck, () =>
    c.sendRequest(ExecuteCommandRequest.type, { command: SERVER_RUN_COMMAND, arguments: [deck.toString()] }),
  );
}

async function openLastReport(): Promise<void> {
  const deck = vscode.window.activeTextEditor?.document.uri;
  if (!deck || deck.scheme !== 'file') {
    void vscode.window.showWarningMessage('rill: open a .rill case first.');
    return;
  }
  const report = expectedReportPath(deck.fsPath, readSettings(), workspaceRoot());
  if (mtimeMs(report) === undefined) {
    void vscode.window.showWarningMessage(`rill: no report yet at ${report}; run the case first.`);
    return;
  }
  await openReport(vscode.Uri.file(report));
}

/** What activate() returns: used by the activation test and by other extensions. */
export interface RillApi {
  client(): LanguageClient | undefined;
  runCase(uri?: vscode.Uri | string): Promise<unknown>;
}

export async function activate(context: vscode.ExtensionContext): Promise<RillApi> {
  output = vscode.window.createOutputChannel('rill');
  context.subscriptions.push(
    output,
    vscode.commands.registerCommand('rill.runCase', runCase),
    vscode.commands.registerCommand('rill.openReport', openLastReport),
    vscode.commands.registerCommand('rill.restartServer', async () => {
      await stopClient();
      await startClient();
    }),
    vscode.workspace.onDidChangeConfiguration(async (e) => {
      if (!e.affectsConfiguration('rill')) {
        return;
      }
      if (e.affectsConfiguration('rill.path')) {
        await stopClient();
        await startClient();
        return;
      }
      if (client?.isRunning()) {
        await client.sendNotification(DidChangeConfigurationNotification.type, {
          settings: { rill: readSettings() },
        });
      }
    }),
    { dispose: () => void stopClient() },
    {
      dispose: () => {
        for (const panel of [...reportPanels.values()]) {
          panel.dispose();
        }
      },
    },
  );
  await startClient();
  return { client: () => client, runCase };
}

export async function deactivate(): Promise<void> {
  runGeneration++; // ends a pending report wait
  await stopClient();
}
