#!/usr/bin/env node
// Opens a `sheaf report` page in a real browser (Debian's chromium, headless,
// driven by puppeteer-core; no browser is ever downloaded) and checks that it
// loads with no console error, no page error and no request beyond the file
// itself, and that every chart drew marks (mark items of Vega's `role-mark`
// groups in the live SVG, per chart). Keeps a full-page screenshot PNG and
// prints its path.
//
//   node scripts/check-report-browser.mjs REPORT.html [--png ci-artefacts/report.png] [--charts N]
//
// --charts N: the page must hold exactly N charts. Exit status 0 when every
// check passes, 1 otherwise. CHROMIUM overrides the browser path.
import { mkdirSync } from 'node:fs';
import { dirname, resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import puppeteer from 'puppeteer-core';

const args = process.argv.slice(2);
const opt = (name, fallback) => {
  const k = args.indexOf(name);
  if (k < 0) return fallback;
  const v = args[k + 1];
  args.splice(k, 2);
  return v;
};
const png = resolve(opt('--png', 'ci-artefacts/report.png'));
const wantCharts = opt('--charts', null);
const page = args[0];
if (!page || args.length !== 1) {
  console.error('usage: node scripts/check-report-browser.mjs REPORT.html [--png FILE.png] [--charts N]');
  process.exit(1);
}
const url = pathToFileURL(resolve(page)).href;
const executablePath = process.env.CHROMIUM ?? '/usr/bin/chromium';

const problems = [];
const browser = await puppeteer.launch({ executablePath, headless: true, args: ['--no-sandbox', '--disable-gpu'] });
try {
  const tab = await browser.newPage();
  await tab.setViewport({ width: 1100, height: 900 });
  tab.on('console', (m) => {
    if (m.type() === 'error') problems.push(`console error: ${m.text()}`);
  });
  tab.on('pageerror', (e) => problems.push(`page error: ${e.message}`));
  await tab.setRequestInterception(true);
  tab.on('request', (r) => {
    if (r.url() === url) return r.continue();
    problems.push(`the page asked for ${r.url()} (it must be self-contained)`);
    return r.abort();
  });
  const response = await tab.goto(url, { waitUntil: 'load' });
  if (!response || !response.ok()) problems.push(`loading ${url} failed`);
  const charts = await tab.$$eval('figure[data-chart]', (figs) =>
    figs.map((f) => {
      const svg = f.querySelector('svg');
      const box = svg ? svg.getBoundingClientRect() : { width: 0, height: 0 };
      const items = svg ? svg.querySelectorAll('g.role-mark:not(.mark-group) > *') : [];
      const data = [...items].filter((e) => !e.parentElement.classList.contains('mark-text'));
      return { id: f.dataset.chart, marks: items.length, dataMarks: data.length, width: Math.round(box.width), height: Math.round(box.height) };
    }),
  );
  if (charts.length === 0) problems.push('the page holds no chart');
  if (wantCharts !== null && charts.length !== Number(wantCharts)) problems.push(`expected ${wantCharts} charts, found ${charts.length}`);
  for (const c of charts) {
    console.log(`  chart ${c.id.padEnd(14)} ${String(c.marks).padStart(5)} marks (${c.dataMarks} not text), ${c.width} × ${c.height} px`);
    if (c.dataMarks === 0) problems.push(`chart \`${c.id}\` drew no marks`);
    if (c.width < 50 || c.height < 50) problems.push(`chart \`${c.id}\` is ${c.width} × ${c.height} px`);
  }
  mkdirSync(dirname(png), { recursive: true });
  await tab.screenshot({ path: png, fullPage: true });
  console.log(`screenshot: ${png}`);
} finally {
  await browser.close();
}
if (problems.length) {
  for (const p of problems) console.error(`check-report-browser: ${p}`);
  process.exit(1);
}
console.log(`check-report-browser: ${page} loads cleanly in chromium and every chart drew marks`);
