'use strict';
// A small stand-in for the `vscode` module: just enough of the API for the
// extension and vscode-languageclient to start a real server process over
// stdio, sync documents, and receive diagnostics, showDocument and command
// calls. Unknown names resolve to inert stubs so that features the test does
// not exercise can still register themselves. Not a general VS Code mock.
const path = require('path');
const { URL, pathToFileURL, fileURLToPath } = require('url');

class Disposable {
  constructor(fn) { this._fn = fn; }
  static from(...items) { return new Disposable(() => items.forEach((i) => i && i.dispose && i.dispose())); }
  dispose() { if (this._fn) { const f = this._fn; this._fn = undefined; f(); } }
}

class EventEmitter {
  constructor() {
    this._listeners = new Set();
    this.event = (listener, thisArg, disposables) => {
      const l = thisArg ? listener.bind(thisArg) : listener;
      this._listeners.add(l);
      const d = new Disposable(() => this._listeners.delete(l));
      if (Array.isArray(disposables)) disposables.push(d);
      return d;
    };
  }
  fire(value) { for (const l of [...this._listeners]) l(value); }
  dispose() { this._listeners.clear(); }
}

class Uri {
  constructor(scheme, authority, p, query, fragment) {
    this.scheme = scheme; this.authority = authority || ''; this.path = p || '/';
    this.query = query || ''; this.fragment = fragment || '';
  }
  static parse(value) {
    const u = new URL(value);
    return new Uri(u.protocol.replace(/:$/, ''), u.host, decodeURIComponent(u.pathname), u.search.replace(/^\?/, ''), u.hash.replace(/^#/, ''));
  }
  static file(p) { return new Uri('file', '', pathToFileURL(path.resolve(p)).pathname.split('/').map(decodeURIComponent).join('/')); }
  static joinPath(base, ...parts) { return new Uri(base.scheme, base.authority, path.posix.join(base.path, ...parts)); }
  get fsPath() { return this.scheme === 'file' ? fileURLToPath(this.toString()) : this.path; }
  with(change) { return new Uri(change.scheme ?? this.scheme, change.authority ?? this.authority, change.path ?? this.path, change.query ?? this.query, change.fragment ?? this.fragment); }
  toString() {
    const p = this.path.split('/').map((s) => encodeURIComponent(s)).join('/');
    return `${this.scheme}://${this.authority}${p}${this.query ? `?${this.query}` : ''}${this.fragment ? `#${this.fragment}` : ''}`;
  }
  toJSON() { return this.toString(); }
}

class Position {
  constructor(line, character) { this.line = line; this.character = character; }
  isEqual(o) { return o.line === this.line && o.character === this.character; }
}
class Range {
  constructor(a, b, c, d) {
    if (typeof a === 'number') { this.start = new Position(a, b); this.end = new Position(c, d); }
    else { this.start = a; this.end = b; }
  }
}
class Location { constructor(uri, range) { this.uri = uri; this.range = range; } }
class Diagnostic { constructor(range, message, severity) { this.range = range; this.message = message; this.severity = severity ?? 0; } }
class DiagnosticRelatedInformation { constructor(location, message) { this.location = location; this.message = message; } }
class MarkdownString {
  constructor(value = '', supportThemeIcons) { this.value = value; this.supportThemeIcons = supportThemeIcons; }
  appendMarkdown(v) { this.value += v; return this; }
  appendText(v) { this.value += v; return this; }
  appendCodeblock(v, lang = '') { this.value += `\n\`\`\`${lang}\n${v}\n\`\`\`\n`; return this; }
}
class Hover { constructor(contents, range) { this.contents = Array.isArray(contents) ? contents : [contents]; this.range = range; } }
class CancellationError extends Error { constructor() { super('Canceled'); this.name = 'Canceled'; } }
class CancellationTokenSource {
  constructor() {
    const emitter = new EventEmitter();
    this._emitter = emitter;
    this.token = { isCancellationRequested: false, onCancellationRequested: emitter.event };
  }
  cancel() { if (!this.token.isCancellationRequested) { this.token.isCancellationRequested = true; this._emitter.fire(undefined); } }
  dispose() { this._emitter.dispose(); }
}

// Anything not modelled: a callable, constructible stub whose members are stubs.
function stub(name) {
  const target = function () {};
  return new Proxy(target, {
    get(_t, prop) {
      if (prop === Symbol.toPrimitive) return () => name;
      if (prop === 'then') return undefined; // not a thenable
      if (prop === 'dispose') return () => undefined;
      return stub(`${name}.${String(prop)}`);
    },
    apply() { return new Disposable(); },
    construct() { return stub(`new ${name}`); },
  });
}
function withFallback(name, obj) {
  return new Proxy(obj, {
    get(t, prop) {
      if (prop in t || typeof prop === 'symbol') return t[prop];
      if (process.env.FAKE_VSCODE_DEBUG) process.stderr.write(`fake vscode: ${name}.${String(prop)}\n`);
      if (typeof prop === 'string' && /^(register|on)/.test(prop)) return () => new Disposable();
      return stub(`${name}.${prop}`);
    },
  });
}

// ---- state the test inspects and drives --------------------------------
const state = {
  configuration: {}, // flat keys under `rill`, e.g. { 'inlayHints.enabled': false }
  diagnostics: new Map(), // uri string -> Diagnostic[]
  openedExternally: [],
  uiKind: 1, // UIKind.Desktop
  remoteName: undefined,
  // Webview panels created: { viewType, title, options, html, revealed, disposed }.
  webviews: [],
  messages: [],
  // What showInformationMessage answers, as if the user clicked that button.
  informationAnswer: undefined,
  commands: new Map(),
  documents: [],
  workspaceFolders: [],
  events: {
    didChangeConfiguration: new EventEmitter(),
    didOpenTextDocument: new EventEmitter(),
    didCloseTextDocument: new EventEmitter(),
    didChangeTextDocument: new EventEmitter(),
    diagnosticsChanged: new EventEmitter(),
  },
};

function getConfiguration(section) {
  const prefix = section ? `${section}.` : '';
  const lookup = (key) => {
    const full = `${prefix}${key}`.replace(/^rill\./, '');
    if (Object.prototype.hasOwnProperty.call(state.configuration, full)) return state.configuration[full];
    // Nested reads such as get('inlayHints') build the object from flat keys.
    const nested = {};
    let found = false;
    for (const [k, v] of Object.entries(state.configuration)) {
      if (k.startsWith(`${full}.`)) { nested[k.slice(full.length + 1)] = v; found = true; }
    }
    return found ? nested : undefined;
  };
  return {
    get(key, dflt) { const v = lookup(key); return v === undefined ? dflt : v; },
    has(key) { return lookup(key) !== undefined; },
    inspect(key) { return { key, defaultValue: undefined, globalValue: lookup(key) }; },
    update() { return Promise.resolve(); },
  };
}

function makeDocument(file, languageId, text) {
  const uri = Uri.file(file);
  const lines = text.split('\n');
  return {
    uri, fileName: uri.fsPath, languageId, version: 1, isDirty: false, isClosed: false, isUntitled: false,
    eol: 1, lineCount: lines.length,
    getText() { return text; },
    save() { return Promise.resolve(true); },
    lineAt(n) { return { text: lines[n] ?? '', range: new Range(n, 0, n, (lines[n] ?? '').length) }; },
    offsetAt(p) { let o = 0; for (let i = 0; i < p.line; i++) o += lines[i].length + 1; return o + p.character; },
    positionAt(offset) { let line = 0; while (line < lines.length - 1 && offset > lines[line].length) { offset -= lines[line].length + 1; line++; } return new Position(line, offset); },
  };
}

function matchSelector(selector, doc) {
  const list = Array.isArray(selector) ? selector : [selector];
  let score = 0;
  for (const s of list) {
    if (typeof s === 'string') { if (s === doc.languageId) score = Math.max(score, 10); continue; }
    if (s.language && s.language !== doc.languageId) continue;
    if (s.scheme && s.scheme !== doc.uri.scheme) continue;
    score = Math.max(score, 10);
  }
  return score;
}

const outputChannel = (name) => ({
  name, lines: [],
  append(v) { this.lines.push(v); }, appendLine(v) { this.lines.push(v); if (process.env.FAKE_VSCODE_DEBUG) process.stderr.write(`[${name}] ${v}\n`); },
  replace(v) { this.lines = [v]; }, clear() { this.lines = []; }, show() {}, hide() {}, dispose() {},
  // LogOutputChannel members used by newer clients.
  trace(v) { this.appendLine(v); }, debug(v) { this.appendLine(v); }, info(v) { this.appendLine(v); },
  warn(v) { this.appendLine(v); }, error(v) { this.appendLine(String(v)); },
  onDidChangeLogLevel: () => new Disposable(), logLevel: 2,
});

const workspace = withFallback('workspace', {
  getConfiguration,
  get textDocuments() { return state.documents; },
  get workspaceFolders() { return state.workspaceFolders; },
  onDidChangeConfiguration: state.events.didChangeConfiguration.event,
  onDidOpenTextDocument: state.events.didOpenTextDocument.event,
  onDidCloseTextDocument: state.events.didCloseTextDocument.event,
  onDidChangeTextDocument: state.events.didChangeTextDocument.event,
  createFileSystemWatcher: () => ({ onDidCreate: () => new Disposable(), onDidChange: () => new Disposable(), onDidDelete: () => new Disposable(), dispose() {} }),
  openTextDocument: async (uri) => state.documents.find((d) => d.uri.toString() === uri.toString()),
  applyEdit: async () => true,
});

const window = withFallback('window', {
  createOutputChannel: (name) => outputChannel(name),
  showInformationMessage: async (m) => { state.messages.push(['info', m]); return state.informationAnswer; },
  showWarningMessage: async (m) => { state.messages.push(['warning', m]); return undefined; },
  showErrorMessage: async (m) => { state.messages.push(['error', m]); return undefined; },
  withProgress: async (_opts, task) => task({ report() {} }, new CancellationTokenSource().token),
  showTextDocument: async () => undefined,
  createWebviewPanel(viewType, title, showOptions, options) {
    const disposed = new EventEmitter();
    const record = { viewType, title, showOptions, options, html: undefined, revealed: 0, disposed: false };
    state.webviews.push(record);
    return {
      viewType, title,
      webview: { get html() { return record.html; }, set html(v) { record.html = v; } },
      reveal() { record.revealed++; },
      onDidDispose: disposed.event,
      dispose() { if (!record.disposed) { record.disposed = true; disposed.fire(); } },
    };
  },
  activeTextEditor: undefined,
  visibleTextEditors: [],
  tabGroups: { all: [], onDidChangeTabs: () => new Disposable(), onDidChangeTabGroups: () => new Disposable() },
  onDidChangeActiveTextEditor: () => new Disposable(),
  onDidChangeVisibleTextEditors: () => new Disposable(),
});

const languages = withFallback('languages', {
  match: matchSelector,
  createDiagnosticCollection: (name) => {
    const own = new Map();
    return {
      name,
      set(uri, diags) {
        if (Array.isArray(uri)) { for (const [u, d] of uri) this.set(u, d); return; }
        own.set(uri.toString(), diags || []);
        state.diagnostics.set(uri.toString(), diags || []);
        state.events.diagnosticsChanged.fire(uri.toString());
      },
      get(uri) { return own.get(uri.toString()); },
      has(uri) { return own.has(uri.toString()); },
      delete(uri) { own.delete(uri.toString()); state.diagnostics.delete(uri.toString()); },
      clear() { for (const k of own.keys()) state.diagnostics.delete(k); own.clear(); },
      forEach(cb) { for (const [k, v] of own) cb(Uri.parse(k), v, this); },
      dispose() { this.clear(); },
    };
  },
});

const commands = withFallback('commands', {
  registerCommand(id, fn) {
    if (state.commands.has(id)) throw new Error(`command '${id}' already exists`);
    state.commands.set(id, fn);
    return new Disposable(() => state.commands.delete(id));
  },
  async executeCommand(id, ...args) {
    const fn = state.commands.get(id);
    if (!fn) throw new Error(`command '${id}' not found`);
    return fn(...args);
  },
  getCommands: async () => [...state.commands.keys()],
});

const env = withFallback('env', {
  appName: 'rill-activation-test', language: 'en', machineId: 'test', sessionId: 'test', uriScheme: 'vscode',
  openExternal: async (uri) => { state.openedExternally.push(uri.toString()); return true; },
  // A desktop VS Code on the deck's machine unless the test says otherwise.
  get uiKind() { return state.uiKind; },
  get remoteName() { return state.remoteName; },
});

const enums = {
  DiagnosticSeverity: { Error: 0, Warning: 1, Information: 2, Hint: 3, 0: 'Error', 1: 'Warning', 2: 'Information', 3: 'Hint' },
  DiagnosticTag: { Unnecessary: 1, Deprecated: 2 },
  ProgressLocation: { SourceControl: 1, Window: 10, Notification: 15 },
  ConfigurationTarget: { Global: 1, Workspace: 2, WorkspaceFolder: 3 },
  EndOfLine: { LF: 1, CRLF: 2 },
  TextDocumentSaveReason: { Manual: 1, AfterDelay: 2, FocusOut: 3 },
  UIKind: { Desktop: 1, Web: 2 },
  ViewColumn: { Active: -1, Beside: -2, One: 1, Two: 2 },
};

module.exports = withFallback('vscode', {
  version: '1.82.0',
  Disposable, EventEmitter, Uri, Position, Range, Location, Diagnostic, DiagnosticRelatedInformation,
  MarkdownString, Hover, CancellationError, CancellationTokenSource,
  ...enums,
  workspace, window, languages, commands, env,
  __test: { state, makeDocument },
});
