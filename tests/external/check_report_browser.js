// The check report page and an SVG picture in a real browser: Debian's chromium, headless, driven by puppeteer-core
// (installed by scripts/setup.sh into tests/external/browser/node_modules; it never downloads a browser).
// Usage: node check_report_browser.js REPEL_EXECUTABLE ARTEFACT_DIR
// Asserts: the page loads with no console error, no failed request and no request beyond the file itself; a header
// click sorts the table; the filter hides rows; opening a structure draws its 3D view with a ring in the marker colour
// at every flagged atom's exposed projected position (and at no other atom); a drag turns the view (canvas pixels and
// rotation change, rings follow); the wheel zooms; a page of 1,000 structures loads without drawing any of them; an
// SVG from `repel shape --picture` renders. Saves screenshots under ARTEFACT_DIR. Exit 77 (skipped) when chromium or
// puppeteer-core is missing.
'use strict';
const fs = require('fs');
const path = require('path');
const {execFileSync, spawnSync} = require('child_process');

const SKIP = 77;
const CHROMIUM = process.env.REPEL_CHROMIUM || '/usr/bin/chromium';
const MARKER = [0xe0, 0x21, 0x8a];  // lib/check/report_page.cpp and lib/output/picture.cpp: kMarker

const [repel, artefacts] = process.argv.slice(2);
if (!repel || !artefacts) {
  console.error('usage: node check_report_browser.js REPEL_EXECUTABLE ARTEFACT_DIR');
  process.exit(2);
}
if (!fs.existsSync(CHROMIUM)) {
  console.log(`skipped: ${CHROMIUM} is not installed (scripts/setup.sh installs Debian's chromium)`);
  process.exit(SKIP);
}
let puppeteer;
try {
  puppeteer = require(path.join(__dirname, 'browser', 'node_modules', 'puppeteer-core'));
} catch (e) {
  console.log('skipped: puppeteer-core is not installed in tests/external/browser (scripts/setup.sh runs npm ci there)');
  process.exit(SKIP);
}

let failures = 0;
function check(ok, what) {
  console.log(`${ok ? 'ok  ' : 'FAIL'} ${what}`);
  if (!ok) ++failures;
}

fs.mkdirSync(artefacts, {recursive: true});
const work = path.join(artefacts, 'report-browser-work');
fs.rmSync(work, {recursive: true, force: true});
fs.mkdirSync(work);
const file = (name) => path.join(work, name);

function build(smiles, out) {
  execFileSync(repel, ['build', smiles, '-o', out]);
}
function checkReport(args, report) {
  // Exit 1 means findings, which these samples have; 2 would be a failure to read.
  const r = spawnSync(repel, ['check', ...args, '--report', report], {encoding: 'utf8'});
  if (r.status !== 0 && r.status !== 1) throw new Error(`repel check failed (${r.status}): ${r.stderr}`);
}

// Sample structures: aspirin as built, a damaged copy (an O pulled off its carbon, one atom lifted), cyclohexane.
build('CC(=O)Oc1ccccc1C(=O)O', file('aspirin.xyz'));
build('C1CCCCC1', file('cyclohexane.xyz'));
const lines = fs.readFileSync(file('aspirin.xyz'), 'utf8').trimEnd().split('\n');
const move = (k, dx, dy, dz) => {
  const p = lines[2 + k].trim().split(/\s+/);
  p[1] = (+p[1] + dx).toFixed(5); p[2] = (+p[2] + dy).toFixed(5); p[3] = (+p[3] + dz).toFixed(5);
  lines[2 + k] = p.join(' ');
};
move(2, 0.9, -0.4, 0);
move(10, 0, 0, 0.8);
lines[1] = 'damaged aspirin';
fs.writeFileSync(file('damaged.xyz'), lines.join('\n') + '\n');
checkReport([file('aspirin.xyz'), file('damaged.xyz'), file('cyclohexane.xyz')], file('sample.html'));

// 1,000 waters, every seventh squashed: the page must load without drawing any of them.
const water = [];
for (let k = 0; k < 1000; ++k) {
  const angle = (k % 7 === 0 ? 85 : 104.5) * Math.PI / 180;
  water.push('3', `water ${k + 1}`, 'O 0 0 0', 'H 0.958 0 0',
             `H ${(0.958 * Math.cos(angle)).toFixed(5)} ${(0.958 * Math.sin(angle)).toFixed(5)} 0`);
}
fs.writeFileSync(file('waters.xyz'), water.join('\n') + '\n');
checkReport([file('waters.xyz')], file('waters.html'));
execFileSync(repel, ['shape', 'XeF4', '--formula', '--picture', file('xef4.svg')]);
// A 9,993-atom polyalanine: opening it and turning it must stay interactive.
build('N[C@@H](C)C(=O)'.repeat(999) + 'O', file('polyalanine.xyz'));
checkReport([file('polyalanine.xyz')], file('polyalanine.html'));

function watch(page, url) {
  const problems = [];
  page.on('console', (m) => { if (m.type() === 'error') problems.push('console: ' + m.text()); });
  page.on('pageerror', (e) => problems.push('page error: ' + e.message));
  page.on('requestfailed', (r) => problems.push('request failed: ' + r.url()));
  page.on('request', (r) => { if (r.url() !== url && !r.url().startsWith('data:')) problems.push('request: ' + r.url()); });
  return problems;
}

// Counts, around each point, the samples on a circle of the given radius whose colour is the marker's.
async function ringHits(page, points) {
  return page.evaluate((points, marker) => {
    const canvas = document.getElementById('view');
    const ctx = canvas.getContext('2d');
    const dpr = canvas.width / canvas.clientWidth;
    const img = ctx.getImageData(0, 0, canvas.width, canvas.height);
    return points.map((p) => {
      let hits = 0;
      for (let k = 0; k < 48; ++k) {
        const a = 2 * Math.PI * k / 48;
        const x = Math.round((p.x + p.ring * Math.cos(a)) * dpr), y = Math.round((p.y + p.ring * Math.sin(a)) * dpr);
        if (x < 0 || y < 0 || x >= canvas.width || y >= canvas.height) continue;
        const i = 4 * (y * canvas.width + x);
        const d = Math.abs(img.data[i] - marker[0]) + Math.abs(img.data[i + 1] - marker[1]) + Math.abs(img.data[i + 2] - marker[2]);
        if (d < 60) ++hits;
      }
      return hits;
    });
  }, points, MARKER);
}

async function canvasDigest(page) {
  return page.evaluate(() => {
    const c = document.getElementById('view');
    const d = c.getContext('2d').getImageData(0, 0, c.width, c.height).data;
    let h = 0;
    for (let i = 0; i < d.length; i += 4) h = (h * 31 + d[i] * 7 + d[i + 1] * 3 + d[i + 2]) >>> 0;
    return h;
  });
}

const nextFrame = (page) => page.evaluate(() => new Promise((r) => requestAnimationFrame(() => requestAnimationFrame(r))));

(async () => {
  const browser = await puppeteer.launch({
    executablePath: CHROMIUM,
    headless: true,
    args: ['--no-sandbox', '--disable-gpu', '--disable-dev-shm-usage'],
  });
  try {
    const page = await browser.newPage();
    await page.setViewport({width: 1400, height: 1000});
    const url = 'file://' + file('sample.html');
    const problems = watch(page, url);
    await page.goto(url, {waitUntil: 'load'});
    check(problems.length === 0, 'sample report loads with no console error and no request: ' + problems.join('; '));

    // Sorting: by atoms ascending, then descending; by # back to the file order.
    const column = (k) => page.$$eval('#summary tbody tr', (rows, k) => rows.map((r) => r.cells[k].dataset.v || r.cells[k].textContent), k);
    await page.click('#summary th:nth-child(4)');
    let atoms = (await column(3)).map(Number);
    check(JSON.stringify(atoms) === JSON.stringify([...atoms].sort((a, b) => a - b)) && atoms[0] === 18,
          `a click on "atoms" sorts ascending: ${atoms}`);
    await page.click('#summary th:nth-child(4)');
    atoms = (await column(3)).map(Number);
    check(atoms[0] === 21 && atoms[atoms.length - 1] === 18, `a second click sorts descending: ${atoms}`);
    await page.click('#summary th:nth-child(6)');
    await page.click('#summary th:nth-child(6)');
    const findings = (await column(5)).map(Number);
    check(findings[0] > 0 && findings.slice(1).every((f) => f === 0), `"findings" descending puts the damaged one first: ${findings}`);

    // Filtering.
    await page.type('#filter', 'cyclohexane.xyz');
    const visible = await page.$$eval('#summary tbody tr', (rows) => rows.filter((r) => !r.hidden).length);
    check(visible === 1, `the filter "cyclohexane.xyz" leaves one row (${visible})`);
    await page.$eval('#filter', (e) => { e.value = ''; e.dispatchEvent(new Event('input')); });

    // Nothing drawn until a structure is opened; then the damaged one.
    check(await page.evaluate(() => window.repelView === undefined), 'no structure is drawn before one is opened');
    await page.click('#summary tbody tr[data-k="2"]');
    await page.waitForFunction(() => window.repelView && String(window.repelView.structure) === '2');
    const data = await page.$eval('#s2', (e) => JSON.parse(e.textContent));
    const named = [...new Set(data.fi.flatMap((f) => f.a))].sort((a, b) => a - b);
    let view = await page.evaluate(() => window.repelView);
    const flaggedAtoms = view.flagged.map((f) => f.atom).sort((a, b) => a - b);
    check(named.length > 0 && JSON.stringify(named) === JSON.stringify(flaggedAtoms),
          `the flagged atoms are those the findings name: ${flaggedAtoms} vs ${named}`);
    let hits = await ringHits(page, view.flagged);
    check(hits.every((h) => h >= 8), `a marker ring is drawn at each flagged atom's projected position (hits ${hits})`);
    const svgMarkers = await page.$$eval('#picture svg circle.marker', (c) => c.map((e) => +e.dataset.atom).sort((a, b) => a - b));
    check(JSON.stringify(svgMarkers) === JSON.stringify(named), `the picture rings the same atoms: ${svgMarkers}`);
    // Control: a ring-sized circle around the canvas centre of a clean structure holds no marker colour.
    await page.click('#summary tbody tr[data-k="3"]');
    await page.waitForFunction(() => window.repelView && String(window.repelView.structure) === '3');
    const clean = await page.evaluate(() => {
      const c = document.getElementById('view');
      return [40, 80, 120].map((ring) => ({x: c.clientWidth / 2, y: c.clientHeight / 2, ring}));
    });
    hits = await ringHits(page, clean);
    check(hits.every((h) => h === 0), `a clean structure shows no marker colour (hits ${hits})`);
    await page.click('#summary tbody tr[data-k="2"]');
    await page.waitForFunction(() => window.repelView && String(window.repelView.structure) === '2');
    await nextFrame(page);
    await page.$eval('#view', (e) => e.scrollIntoView());
    await page.screenshot({path: path.join(artefacts, 'check-report-sample.png'), fullPage: true});

    // A drag turns the view: pixels and rotation change, and the rings follow the atoms.
    const before = await canvasDigest(page);
    const rotBefore = view.rotation;
    const box = await (await page.$('#view')).boundingBox();
    await page.mouse.move(box.x + box.width / 2, box.y + box.height / 2);
    await page.mouse.down();
    for (let k = 1; k <= 8; ++k) await page.mouse.move(box.x + box.width / 2 + 12 * k, box.y + box.height / 2 + 5 * k);
    await page.mouse.up();
    await nextFrame(page);
    const after = await canvasDigest(page);
    view = await page.evaluate(() => window.repelView);
    check(before !== after, 'a drag changes the canvas pixels');
    check(JSON.stringify(rotBefore) !== JSON.stringify(view.rotation), 'a drag turns the rotation');
    hits = await ringHits(page, view.flagged);
    check(hits.every((h) => h >= 8), `after the drag the rings are at the new projected positions (hits ${hits})`);

    // The wheel zooms in.
    await page.mouse.move(box.x + box.width / 2, box.y + box.height / 2);
    await page.mouse.wheel({deltaY: -300});
    await nextFrame(page);
    view = await page.evaluate(() => window.repelView);
    check(view.zoom > 1.2, `the wheel zooms (zoom ${view.zoom.toFixed(2)})`);

    // 1,000 structures: the page loads, nothing is drawn, one opens quickly, the filter works.
    const big = await browser.newPage();
    const bigUrl = 'file://' + file('waters.html');
    const bigProblems = watch(big, bigUrl);
    const t0 = Date.now();
    await big.goto(bigUrl, {waitUntil: 'load'});
    const loadMs = Date.now() - t0;
    const rows = await big.$$eval('#summary tbody tr', (r) => r.length);
    check(rows === 1000 && bigProblems.length === 0, `1,000 rows, no error (${rows}; ${bigProblems.join('; ')})`);
    check(loadMs < 5000, `the 1,000-structure page loads in ${loadMs} ms (bound 5,000 on the shared 2-core machine)`);
    check(await big.evaluate(() => window.repelView === undefined), 'no structure of the 1,000 is drawn on load');
    const t1 = Date.now();
    await big.click('#summary tbody tr[data-k="700"]');
    await big.waitForFunction(() => window.repelView && String(window.repelView.structure) === '700');
    const openMs = Date.now() - t1;
    check(openMs < 1500, `opening one structure takes ${openMs} ms`);
    await big.type('#filter', 'warnings');
    const warned = await big.$$eval('#summary tbody tr', (r) => r.filter((x) => !x.hidden).length);
    check(warned === 143, `the filter "warnings" leaves the 143 squashed waters (${warned})`);
    await big.screenshot({path: path.join(artefacts, 'check-report-1000.png')});

    // A 10,000-atom structure: opened (its JSON parsed, its picture inserted, its view drawn) and turned.
    const large = await browser.newPage();
    await large.setViewport({width: 1400, height: 1000});
    const largeUrl = 'file://' + file('polyalanine.html');
    const largeProblems = watch(large, largeUrl);
    await large.goto(largeUrl, {waitUntil: 'load'});
    const timing = await large.evaluate(async () => {
      const t0 = performance.now();
      window.repelOpen('1');
      const open = performance.now() - t0;
      const canvas = document.getElementById('view');
      const r = canvas.getBoundingClientRect();
      const ev = (type, x) => canvas.dispatchEvent(new PointerEvent(type, {clientX: r.left + x, clientY: r.top + 100, pointerId: 1, bubbles: true}));
      ev('pointerdown', 100);
      const t1 = performance.now();
      ev('pointermove', 140);
      await new Promise((res) => requestAnimationFrame(() => res()));
      const frame = performance.now() - t1;
      ev('pointerup', 140);
      return {open, frame, atoms: window.repelView.atoms};
    });
    check(timing.atoms === 9993 && largeProblems.length === 0,
          `the 9,993-atom structure opens (${timing.atoms} atoms; ${largeProblems.join('; ')})`);
    check(timing.open < 3000 && timing.frame < 1000,
          `open in ${timing.open.toFixed(0)} ms, one turned frame in ${timing.frame.toFixed(0)} ms (bounds 3,000 / 1,000)`);

    // The SVG picture renders in the same browser.
    const svgPage = await browser.newPage();
    const svgUrl = 'file://' + file('xef4.svg');
    const svgProblems = watch(svgPage, svgUrl);
    await svgPage.goto(svgUrl, {waitUntil: 'load'});
    const svgInfo = await svgPage.evaluate(() => ({
      root: document.documentElement.localName,
      atoms: document.querySelectorAll('circle.atom').length,
      lobes: document.querySelectorAll('ellipse.lobe').length,
      width: document.documentElement.getBBox().width,
    }));
    check(svgInfo.root === 'svg' && svgInfo.atoms === 5 && svgInfo.lobes === 2 && svgInfo.width > 100 &&
          svgProblems.length === 0, `the XeF4 picture renders: ${JSON.stringify(svgInfo)} ${svgProblems.join('; ')}`);
    await svgPage.screenshot({path: path.join(artefacts, 'picture-xef4.png')});
  } finally {
    await browser.close();
  }
  console.log(`screenshots in ${artefacts}`);
  if (failures > 0) {
    console.log(`${failures} check(s) failed`);
    process.exit(1);
  }
  console.log('all browser checks passed');
})().catch((e) => {
  console.error(e);
  process.exit(1);
});
