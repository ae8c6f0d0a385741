'use strict';
// The grammar on the real example decks (examples/**/*.rill): every token
// gets a rill scope, none is invalid, and every quantity's unit is scoped
// as a unit. The fixtures in test/grammar/ check the scopes one by one.
const test = require('node:test');
const assert = require('node:assert/strict');
const fs = require('fs');
const path = require('path');
const vt = require('vscode-textmate');
const oniguruma = require('vscode-oniguruma');

const root = path.resolve(__dirname, '../..');
const repo = path.resolve(root, '../..');
const grammarPath = path.join(root, 'syntaxes', 'rill.tmLanguage.json');

function decks(dir) {
  return fs.readdirSync(dir, { withFileTypes: true }).flatMap((e) => {
    const p = path.join(dir, e.name);
    if (e.isDirectory()) return decks(p);
    return e.name.endsWith('.rill') ? [p] : [];
  });
}

async function loadGrammar() {
  const wasm = fs.readFileSync(require.resolve('vscode-oniguruma/release/onig.wasm')).buffer;
  await oniguruma.loadWASM(wasm);
  const registry = new vt.Registry({
    onigLib: Promise.resolve({
      createOnigScanner: (patterns) => new oniguruma.OnigScanner(patterns),
      createOnigString: (s) => new oniguruma.OnigString(s),
    }),
    loadGrammar: async () => vt.parseRawGrammar(fs.readFileSync(grammarPath, 'utf8'), grammarPath),
  });
  return registry.loadGrammar('source.rill');
}

test('example decks tokenize with rill scopes only', async () => {
  const grammar = await loadGrammar();
  const files = decks(path.join(repo, 'examples'));
  assert.ok(files.length >= 3, `example decks found: ${files.length}`);
  const problems = [];
  let units = 0;
  for (const file of files) {
    let stack = vt.INITIAL;
    fs.readFileSync(file, 'utf8').split('\n').forEach((line, n) => {
      const r = grammar.tokenizeLine(line, stack);
      stack = r.ruleStack;
      for (const t of r.tokens) {
        const text = line.slice(t.startIndex, t.endIndex);
        const where = `${path.relative(repo, file)}:${n + 1}:${t.startIndex + 1} ${JSON.stringify(text)}`;
        if (!text.trim()) continue;
        if (t.scopes.length < 2) problems.push(`${where}: no scope`);
        if (t.scopes.some((s) => s.startsWith('invalid'))) problems.push(`${where}: ${t.scopes.join(' ')}`);
        if (t.scopes.includes('keyword.other.unit.rill')) units++;
      }
      // A number directly followed by a letter-led word on the same line,
      // outside comments and strings, is a quantity: its unit must be scoped.
      const code = line.replace(/"(?:[^"\\]|\\.)*"/g, (m) => ' '.repeat(m.length)).replace(/#.*$/, '');
      for (const m of code.matchAll(/(?<![\w.])-?\d[\d.eE+-]*\s+([A-Za-z][\w^/*]*)/g)) {
        const unit = m[1];
        // `30 x 20`, `psi at 7150 ft` and `12..14 k = 3` (a selector key) are not units.
        if (unit === 'x' || unit === 'at' || /^\s*=/.test(code.slice(m.index + m[0].length))) continue;
        const col = m.index + m[0].length - unit.length;
        const tok = r.tokens.find((t) => t.startIndex <= col && col < t.endIndex);
        if (!tok || !tok.scopes.includes('keyword.other.unit.rill')) {
          problems.push(`${path.relative(repo, file)}:${n + 1}:${col + 1} unit ${unit} not scoped as a unit`);
        }
      }
    });
  }
  assert.deepEqual(problems, []);
  assert.ok(units > 20, `units scoped in the examples: ${units}`);
});
