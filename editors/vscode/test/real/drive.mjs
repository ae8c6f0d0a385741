// Drives the rill extension in a real VS Code (code-server) with headless
// Chromium: opens the workspace, sees a diagnostic in the Problems panel,
// hovers a well's cell and finds the interface transmissibilities, runs
// the case from the command palette and finds its result files, then
// hovers again and finds the run's values. Run by
// scripts/checks/vscode_real.sh:
//   node drive.mjs URL WORKSPACE SCREENSHOT_DIR
import { chromium } from 'playwright-core';
import fs from 'node:fs';
import path from 'node:path';

const [url, workspace, shots] = process.argv.slice(2);
let passed = 0;
let failed = 0;

async function check(name, fn) {
  const started = Date.now();
  try {
    await fn();
    passed += 1;
    console.log(`-- ok: ${name} (${((Date.now() - started) / 1000).toFixed(1)} s)`);
    return true;
  } catch (e) {
    failed += 1;
    console.log(`-- FAILED: ${name}: ${String(e.message || e).split('\n').slice(0, 12).join('\n    ')}`);
    await page.screenshot({ path: path.join(shots, `${name.replace(/\W+/g, '-')}.png`) }).catch(() => {});
    return false;
  }
}

async function until(what, test, seconds) {
  const end = Date.now() + seconds * 1000;
  for (;;) {
    const got = await test();
    if (got) return got;
    if (Date.now() > end) {
      const said = typeof what === 'function' ? what() : what;
      throw new Error(`timed out after ${seconds} s waiting for ${said}`);
    }
    await new Promise((r) => setTimeout(r, 250));
  }
}

// Opens a file of the workspace from the explorer and waits for its tab
// and its text.
async function open(name) {
  await page.locator('.explorer-item', { hasText: name }).first().click();
  await page.locator('.tabs-container .tab', { hasText: name }).first().waitFor({ timeout: 20000 });
  await page.locator('.monaco-editor .view-line').first().waitFor({ timeout: 20000 });
  await page.waitForTimeout(500);
}

// Hovers the editor at the text `needle` of `file` (its first
// occurrence), `plus` characters into it, until the hover shows `want`;
// returns the hover's text. The line is brought into view with Go to Line.
async function hoverAt(file, needle, plus, want, seconds) {
  const lines = fs.readFileSync(path.join(workspace, file), 'utf8').split('\n');
  const lineNo = lines.findIndex((l) => l.includes(needle)) + 1;
  if (lineNo === 0) throw new Error(`"${needle}" is not in ${file}`);
  const visible = async () =>
    (await page.locator('.monaco-editor .view-line', { hasText: needle }).count()) > 0;
  if (!(await visible())) {
    await page.keyboard.press('Control+G');
    await page.waitForSelector('.quick-input-widget input');
    await page.keyboard.type(String(lineNo));
    await page.waitForTimeout(300);
    await page.keyboard.press('Enter');
    await until(`line ${lineNo} in view`, visible, 10);
  }
  // Nothing over the editor (a box left open, a notification's focus).
  await page.keyboard.press('Escape');
  await page.waitForTimeout(300);
  let last = '(no hover)';
  return until(
    () => `a hover with "${want}" at "${needle}"; last hover: ${last.slice(0, 600)}`,
    async () => {
      const line = page.locator('.monaco-editor .view-line', { hasText: needle });
      if ((await line.count()) === 0) return null;
      // The line's text span (the view line itself is as wide as the editor).
      const content = line.first().locator(':scope > span').first();
      const box = await content.boundingBox();
      if (!box) return null;
      // The editor takes the focus (a run leaves it in its notification).
      await page.mouse.click(box.x + 2, box.y + box.height / 2);
      const text = (await content.innerText()).replace(/\u00a0/g, ' ');
      const at = text.indexOf(needle);
      // Character width from the text (a monospace font; no inlay hint on
      // these lines).
      const width = box.width / Math.max(1, text.length);
      await page.mouse.move(box.x + 1, box.y - 40);
      await page.waitForTimeout(200);
      await page.mouse.move(box.x + (at + plus + 0.5) * width, box.y + box.height / 2);
      await page.waitForTimeout(1500);
      const hover = page.locator('.monaco-hover:not(.hidden) .monaco-hover-content');
      if ((await hover.count()) === 0) return null;
      const shown = await hover.first().innerText();
      last = shown;
      return shown.includes(want) ? shown : null;
    },
    seconds,
  );
}

const browser = await chromium.launch({ executablePath: process.env.CHROMIUM || '/usr/bin/chromium', args: ['--no-sandbox'] });
const page = await browser.newPage({ viewport: { width: 1500, height: 1000 } });
page.setDefaultTimeout(30000);

await check('the workbench loads with the workspace', async () => {
  await page.goto(`${url}/?folder=${encodeURIComponent(workspace)}`);
  await page.waitForSelector('.monaco-workbench', { timeout: 90000 });
  await until('the explorer to list the decks', async () => (await page.locator('.explorer-item', { hasText: 'broken.rill' }).count()) > 0, 60);
});

await check('a diagnostic of rill lsp shows in the Problems panel', async () => {
  await open('broken.rill');
  await page.keyboard.press('Control+Shift+M');
  await until(
    'the unit.dimension problem',
    async () => {
      const text = await page.locator('.markers-panel').innerText().catch(() => '');
      return text.includes('unit.dimension') && text.includes('viscosity');
    },
    90,
  );
});

await check('hover on a well cell shows its faces and interface transmissibilities', async () => {
  await page.keyboard.press('Control+J'); // the panel away: room for the editor
  await open('teaching-block.rill');
  const hoverBefore = await hoverAt('teaching-block.rill', 'location = (6, 6)', 'location = ('.length, 'k_face', 60);
  // The face table: each face, its neighbour, the harmonic face
  // permeability and the interface transmissibility T.
  for (const want of ['east', 'west', 'north', 'south', '(7, 6, 1)', 'T [']) {
    if (!hoverBefore.includes(want)) throw new Error(`hover lacks "${want}": ${hoverBefore.slice(0, 400)}`);
  }
});

await check('rill: Run case writes the result set', async () => {
  // The editor has the focus (Go to Line left it there): its command.
  await page.keyboard.press('Escape');
  await page.keyboard.press('F1');
  await page.waitForSelector('.quick-input-widget input');
  await page.keyboard.type('rill: Run case');
  await page.waitForTimeout(800);
  await page.keyboard.press('Enter');
  const out = path.join(workspace, 'teaching-block.out');
  await until('series.csv and report.html', async () => fs.existsSync(path.join(out, 'series.csv')) && fs.existsSync(path.join(out, 'report.html')), 120);
});

await check('hover after the run shows the last run', async () => {
  // The run may open its report in a new browser tab: back to the workbench.
  for (const other of page.context().pages()) {
    if (other !== page) await other.close();
  }
  await page.bringToFront();
  const shown = await hoverAt('teaching-block.rill', 'location = (6, 6)', 'location = ('.length, 'last run', 60);
  if (!/into the cell|out of the cell/.test(shown)) throw new Error(`no flux direction: ${shown.slice(0, 300)}`);
});

await page.screenshot({ path: path.join(shots, 'final.png') }).catch(() => {});
await browser.close();
console.log(`vscode-real: ${passed} passed, ${failed} failed`);
process.exit(failed === 0 ? 0 : 1);
