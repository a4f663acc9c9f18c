// notebook_check.js opens a notebook in a running classic Jupyter notebook
// server under headless Chromium, runs all its cells through the Cell menu
// with the Semiflow kernel, and checks what a reader would see: figures (a
// PNG image inside a result's HTML output, an svg element from an
// image/svg+xml output), HTML tables, no error output, SVG text inside its figure, figures
// that fit the output area, and outputs that survive saving. It saves a
// full-page screenshot of each notebook and ends with the line 'checks: N passed, N failed'.
//
// With --committed it first opens each notebook as committed — outputs kept,
// not trusted, not run — as a colleague opening a shared notebook meets it,
// and checks that every output carrying a figure shows it, that no hidden
// figure description leaks into the page, that error outputs render as
// errors (coloured, no raw escape codes), and that the layout (outputs per
// cell, figure sizes, output heights) matches the stored reference
// DIR/NAME.json of --layout (written instead when --update-layout is 1).
//
// Started by run_browser_test.sh, which owns the server and the temporary
// directories:
//   node notebook_check.js --url URL --token T --notebooks A.ipynb[,B.ipynb...]
//     --chromium PATH --profile DIR --artifacts DIR [--timeout SECONDS]
//     [--committed C.ipynb[,D.ipynb...] --layout DIR [--update-layout 1]]
// Each notebook gets its own page, kernel and screenshot DIR/NAME.png.
'use strict';

const fs = require('fs');
const path = require('path');
const { chromium } = require('playwright-core');

function parseArgs(argv) {
  const opts = { timeout: '140' };
  for (let i = 0; i < argv.length; i += 2) {
    if (!argv[i].startsWith('--') || i + 1 >= argv.length) {
      throw new Error(`bad argument ${argv[i]}`);
    }
    opts[argv[i].slice(2)] = argv[i + 1];
  }
  for (const k of ['url', 'token', 'chromium', 'profile', 'artifacts']) {
    if (!opts[k]) throw new Error(`missing --${k}`);
  }
  if (!opts.notebooks && !opts.committed) throw new Error('missing --notebooks or --committed');
  if (opts.committed && !opts.layout) throw new Error('--committed needs --layout');
  opts.timeout = Number(opts.timeout) * 1000;
  return opts;
}

const results = [];
function check(name, ok, detail) {
  results.push({ name, ok });
  console.log(`${ok ? 'PASS' : 'FAIL'} ${name}${detail ? ': ' + detail : ''}`);
  return ok;
}

function summary() {
  const passed = results.filter((r) => r.ok).length;
  const failed = results.length - passed;
  console.log(`checks: ${passed} passed, ${failed} failed`);
  return failed;
}

// bounded settles like p, or rejects once ms have passed: a page that stops
// answering must not hang the test.
function bounded(p, ms, what) {
  let timer;
  const limit = new Promise((_, reject) => {
    timer = setTimeout(() => reject(new Error(`${what}: no answer within ${ms / 1000} s`)), ms);
  });
  return Promise.race([p, limit]).finally(() => clearTimeout(timer));
}

// ev evaluates fn(arg) in the page, within 20 s.
function ev(page, fn, arg) {
  return bounded(page.evaluate(fn, arg), 20000, 'page script');
}

// Polls fn in the page until it returns a truthy value or ms pass; returns the
// last value (falsy on time-out).
async function pollPage(page, fn, arg, ms, every = 250) {
  const end = Date.now() + ms;
  let v;
  for (;;) {
    v = await ev(page, fn, arg);
    if (v || Date.now() > end) return v;
    await page.waitForTimeout(every);
  }
}

// The state of the kernel as the page shows it.
function kernelState() {
  const nb = window.Jupyter && window.Jupyter.notebook;
  const icon = document.getElementById('kernel_indicator_icon');
  const name = document.querySelector('.kernel_indicator_name');
  const modal = document.querySelector('.modal.in .modal-body');
  return {
    loaded: !!(nb && nb._fully_loaded),
    connected: !!(nb && nb.kernel && nb.kernel.is_connected()),
    kernel: nb && nb.kernel ? nb.kernel.name : null,
    display: name ? name.textContent.trim() : '',
    idle: !!(icon && icon.classList.contains('kernel_idle_icon')),
    dead: !!(icon && icon.classList.contains('kernel_dead_icon')),
    dialog: modal ? modal.textContent.trim().slice(0, 300) : '',
  };
}

// The code cells' prompts: '*' while queued or running, a number when done,
// null when never run.
function cellPrompts() {
  return Jupyter.notebook
    .get_cells()
    .filter((c) => c.cell_type === 'code')
    .map((c) => (c.input_prompt_number === undefined ? null : c.input_prompt_number));
}

// What the output area shows, counted per kind; every SVG text or figure
// that does not fit; ids (clip paths, gradients) that several figures share,
// which makes a later figure draw with an earlier one's definitions.
function inspectOutputs() {
  const slack = 0.5; // px, for anti-aliased edges
  const out = { svgs: 0, svgFromSvg: 0, svgInHtml: 0, pngs: 0, blankPngs: [], tables: 0, errors: [], clipped: [], wide: [], texts: 0, figureSizes: [], ids: 0, duplicateIds: [] };
  const idOwner = new Map(); // id → index of the first figure that has it
  const cells = Jupyter.notebook.get_cells().filter((c) => c.cell_type === 'code');
  cells.forEach((cell, k) => {
    const el = cell.element[0];
    for (const e of el.querySelectorAll('.output_error')) {
      out.errors.push(`cell ${k + 1}: ${e.textContent.trim().slice(0, 300)}`);
    }
    out.tables += [...el.querySelectorAll('.output_html table')].filter((t) => t.rows.length >= 2).length;
    for (const sub of el.querySelectorAll('.output_subarea')) {
      // A result's HTML shows its figure as a PNG image (data URI); it must
      // have loaded and fit the output area.
      for (const img of sub.querySelectorAll('img[src^="data:image/png"]')) {
        out.pngs++;
        const box = img.getBoundingClientRect();
        const area = sub.getBoundingClientRect();
        out.figureSizes.push(`${Math.round(box.width)}×${Math.round(box.height)}`);
        if (!img.complete || img.naturalWidth === 0) out.blankPngs.push(`cell ${k + 1}: PNG figure ${out.pngs} did not load`);
        if (box.right > area.right + slack) {
          out.wide.push(`cell ${k + 1}: PNG figure ${out.pngs} is ${Math.round(box.width)} px wide in an output area of ${Math.round(area.width)} px`);
        }
      }
      for (const svg of sub.querySelectorAll('svg')) {
        if (svg.parentElement.closest('svg')) continue; // nested svg
        if (sub.classList.contains('output_svg')) out.svgFromSvg++;
        else out.svgInHtml++;
        out.svgs++;
        const box = svg.getBoundingClientRect();
        const area = sub.getBoundingClientRect();
        out.figureSizes.push(`${Math.round(box.width)}×${Math.round(box.height)}`);
        if (box.width < 20 || box.height < 20) {
          out.wide.push(`cell ${k + 1}: figure ${out.svgs} is ${box.width}×${box.height} px`);
        }
        if (box.right > area.right + slack || sub.scrollWidth > sub.clientWidth + 1) {
          out.wide.push(
            `cell ${k + 1}: figure ${out.svgs} is ${Math.round(box.width)} px wide in an output area of ${Math.round(area.width)} px`,
          );
        }
        for (const x of svg.querySelectorAll('[id]')) {
          out.ids++;
          const first = idOwner.get(x.id);
          if (first === undefined) idOwner.set(x.id, out.svgs);
          else if (first !== out.svgs && !out.duplicateIds.includes(x.id)) out.duplicateIds.push(x.id);
        }
        for (const t of svg.querySelectorAll('text')) {
          const r = t.getBoundingClientRect();
          if (r.width === 0 && r.height === 0) continue; // empty text
          out.texts++;
          if (
            r.left < box.left - slack ||
            r.top < box.top - slack ||
            r.right > box.right + slack ||
            r.bottom > box.bottom + slack
          ) {
            const f = (x) => x.toFixed(1);
            out.clipped.push(
              `cell ${k + 1}, figure ${out.svgs}: "${t.textContent.trim().slice(0, 40)}" at ` +
                `[${f(r.left - box.left)}, ${f(r.top - box.top)}, ${f(r.right - box.left)}, ${f(r.bottom - box.top)}] ` +
                `outside ${f(box.width)}×${f(box.height)}`,
            );
          }
        }
      }
    }
  });
  return out;
}

// Runs one notebook in a new page and checks it; per-notebook failures are
// recorded and the next notebook still runs.
async function checkNotebook(context, opts, name, prefix, left) {
  const pageErrors = [];
  const page = await context.newPage();
  page.on('pageerror', (e) => pageErrors.push(String(e.message || e).slice(0, 200)));
  page.setDefaultTimeout(30000);
  const c = (what, ok, detail) => check(prefix + what, ok, detail);
  try {
    const url = `${opts.url}/notebooks/${encodeURIComponent(name)}?token=${opts.token}`;
    const resp = await page.goto(url, { waitUntil: 'load', timeout: Math.min(30000, left()) });
    if (!c('page loads', resp && resp.ok(), `HTTP ${resp ? resp.status() : 'none'} for /notebooks/${name}`)) return;

    const ready = await pollPage(
      page,
      (fn) => {
        const s = eval(`(${fn})`)();
        return s.dialog || s.dead || (s.loaded && s.connected && s.idle) ? s : null;
      },
      kernelState.toString(),
      Math.min(60000, left()),
    );
    const state = ready || (await ev(page, kernelState));
    if (
      !c(
        'kernel Semiflow starts and is idle',
        !!ready && !state.dialog && !state.dead && state.kernel === 'semiflow' && state.display === 'Semiflow',
        `kernel=${state.kernel} shown as "${state.display}" idle=${state.idle} dead=${state.dead}` +
          (state.dialog ? ` dialog: ${state.dialog}` : ''),
      )
    )
      return;

    // Syntax highlighting: the kernelspec's kernel.js defines the CodeMirror
    // mode "semiflow", which the code cells use once the kernel is ready.
    const hl = await pollPage(
      page,
      () => {
        const cells = Jupyter.notebook.get_cells().filter((x) => x.cell_type === 'code');
        const modes = cells.map((x) => x.code_mirror.getMode().name);
        const marked = document.querySelectorAll('.CodeMirror .cm-builtin, .CodeMirror .cm-keyword, .CodeMirror .cm-def').length;
        return cells.length > 0 && modes.every((m) => m === 'semiflow') && marked > 0 ? { modes: modes.length, marked } : null;
      },
      '',
      Math.min(15000, left()),
    );
    c(
      'code cells highlighted by the semiflow mode',
      !!hl,
      hl ? `${hl.modes} cells, ${hl.marked} builtins, keywords and definitions marked` : 'the mode was not applied',
    );

    const nCode = (await ev(page, cellPrompts)).length;
    const t0 = Date.now();
    // Cell → Run All, as a person would.
    await page.click('#celllink');
    await page.click('#run_all_cells > a');
    const done = await pollPage(
      page,
      (fn) => {
        const prompts = eval(`(${fn})`)();
        const icon = document.getElementById('kernel_indicator_icon');
        const idle = icon && icon.classList.contains('kernel_idle_icon');
        return idle && prompts.length > 0 && !prompts.includes('*') ? prompts : null;
      },
      cellPrompts.toString(),
      left() - 8000,
    );
    const runSecs = ((Date.now() - t0) / 1000).toFixed(1);
    const prompts = done || (await ev(page, cellPrompts));
    c(
      'Run All finishes (no In [*])',
      !!done,
      done ? `${nCode} code cells in ${runSecs} s` : `still running after ${runSecs} s: prompts ${JSON.stringify(prompts)}`,
    );
    const unrun = prompts.map((p, k) => (typeof p === 'number' ? null : k + 1)).filter((k) => k !== null);
    c('every code cell ran', unrun.length === 0, unrun.length ? `cells without a count: ${unrun.join(', ')}` : `${nCode} cells`);

    const out = await ev(page, inspectOutputs);
    c('no error output', out.errors.length === 0, out.errors.join(' | '));
    c(
      'at least one figure shown (PNG in a result, or SVG)',
      out.pngs + out.svgs >= 1 && out.blankPngs.length === 0,
      `${out.pngs} PNG figures in HTML outputs, ${out.svgFromSvg} SVG from image/svg+xml outputs, ${out.svgInHtml} SVG inside HTML outputs` +
        (out.figureSizes.length ? `; sizes ${out.figureSizes.join(', ')} px` : '') +
        (out.blankPngs.length ? `; ${out.blankPngs.join(' | ')}` : ''),
    );
    c('at least one HTML table', out.tables >= 1, `${out.tables} tables`);
    // Formulas: the notebook's MathJax typesets the TeX our HTML writes
    // between \( and \) and the $…$ of a quantity's Markdown; none is left
    // as raw TeX in the page.
    const mathState = () => {
      const spans = document.querySelectorAll('.output_area .semiflow-math').length;
      const md = document.querySelectorAll('.output_area .output_markdown').length;
      const typeset = document.querySelectorAll('.output_area .MathJax, .output_area .MathJax_SVG, .output_area mjx-container').length;
      const raw = [...document.querySelectorAll('.output_area')].filter((o) => /\\\(|\$\\/.test(o.innerText)).length;
      return { spans, md, typeset, raw };
    };
    let math = await pollPage(
      page,
      (fn) => {
        const m = eval(`(${fn})`)();
        return m.spans + m.md === 0 || (m.typeset > 0 && m.raw === 0) ? m : null;
      },
      mathState.toString(),
      Math.min(15000, left() - 8000),
    );
    math = math || (await ev(page, mathState));
    c(
      'formulas typeset by the notebook (no raw TeX left)',
      math.spans + math.md === 0 || (math.typeset > 0 && math.raw === 0),
      `${math.spans} formulas in HTML outputs, ${math.md} Markdown outputs, ${math.typeset} typeset, ${math.raw} outputs with raw TeX`,
    );
    c(
      'SVG text inside its figure',
      out.clipped.length === 0,
      out.clipped.length ? out.clipped.slice(0, 10).join(' | ') : `${out.texts} text elements checked`,
    );
    c('figures fit the output area', out.pngs + out.svgs >= 1 && out.wide.length === 0, out.wide.join(' | '));
    c(
      'SVG ids unique on the page',
      out.duplicateIds.length === 0,
      out.duplicateIds.length ? `shared by several figures: ${out.duplicateIds.slice(0, 10).join(', ')}` : `${out.ids} ids`,
    );

    // Save, then read the notebook back through the contents API.
    await ev(page, () => Jupyter.notebook.save_notebook());
    const saved = await ev(page, 
      async ([nbName, token]) => {
        const r = await fetch(`/api/contents/${encodeURIComponent(nbName)}?type=notebook&content=1&token=${token}`);
        if (!r.ok) return { status: r.status };
        const nb = (await r.json()).content;
        const code = nb.cells.filter((x) => x.cell_type === 'code');
        const kinds = new Set();
        for (const x of code) for (const o of x.outputs) for (const k of Object.keys(o.data || {})) kinds.add(k);
        return { status: r.status, counted: code.every((x) => x.execution_count !== null), kinds: [...kinds] };
      },
      [name, opts.token],
    );
    c(
      'saved notebook keeps its outputs',
      saved.status === 200 && saved.counted && saved.kinds.includes('image/svg+xml') && saved.kinds.includes('image/png') && saved.kinds.includes('text/html'),
      `status ${saved.status}, all counted ${saved.counted}, MIME types ${(saved.kinds || []).join(' ')}`,
    );

    const shot = await fullPageShot(page, opts, name.replace(/\.ipynb$/, '') + '.png', left);
    const size = fs.statSync(shot).size;
    c('full-page screenshot', size > 10000, `${shot} (${Math.round(size / 1024)} kB)`);
  } finally {
    if (pageErrors.length) console.log(`note: ${prefix}page script errors: ${pageErrors.slice(0, 5).join(' | ')}`);
    // Stop this notebook's kernel so the next one starts from nothing.
    await ev(page, () => Jupyter.notebook.session && Jupyter.notebook.session.delete()).catch(() => {});
    await bounded(page.close(), 10000, 'closing the page').catch(() => {});
  }
}

// fullPageShot saves a screenshot of the whole notebook as opts.artifacts/file
// and returns its path. The classic notebook scrolls long outputs in a box
// and the page inside #site; both are unscrolled so every output shows in
// full.
async function fullPageShot(page, opts, file, left) {
  await ev(page, () => Jupyter.notebook.get_cells().forEach((x) => x.output_area && x.output_area.unscroll_area()));
  await page.addStyleTag({
    content:
      'html, body { height: auto !important; overflow: visible !important; position: static !important; }' +
      ' #site { height: auto !important; overflow: visible !important; display: block !important; }' +
      ' #header { position: static !important; }',
  });
  await page.waitForTimeout(300);
  fs.mkdirSync(opts.artifacts, { recursive: true });
  const shot = path.join(opts.artifacts, file);
  await page.screenshot({ path: shot, fullPage: true, timeout: Math.min(30000, left()) });
  return shot;
}

// What a committed notebook shows before anything runs, per code cell:
// the outputs that carry a figure in the file (image/png, image/svg+xml, or
// HTML with an image) against the output areas that show a visible figure;
// the figure descriptions (<title>, <desc> of the SVGs in the file) that
// appear as page text; the error outputs in the file against those rendered
// as errors, with their colouring; raw escape codes left in the text; and
// the layout: output areas, figure sizes and output height.
function inspectCommitted() {
  const out = { trusted: !!Jupyter.notebook.trusted, cells: [], problems: [] };
  const visible = (el) => {
    const r = el.getBoundingClientRect();
    if (r.width < 20 || r.height < 20) return null;
    if (el.tagName.toLowerCase() === 'img' && (!el.complete || el.naturalWidth === 0)) return null;
    const st = getComputedStyle(el);
    if (st.display === 'none' || st.visibility === 'hidden' || Number(st.opacity) === 0) return null;
    return `${Math.round(r.width)}×${Math.round(r.height)}`;
  };
  const parser = new DOMParser();
  const cells = Jupyter.notebook.get_cells().filter((c) => c.cell_type === 'code');
  cells.forEach((cell, k) => {
    const where = `cell ${k + 1}`;
    const outputs = (cell.output_area && cell.output_area.outputs) || [];
    let figureOutputs = 0;
    let errorOutputs = 0;
    const hidden = [];
    for (const o of outputs) {
      if (o.output_type === 'error') errorOutputs++;
      const d = o.data || {};
      const html = typeof d['text/html'] === 'string' ? d['text/html'] : Array.isArray(d['text/html']) ? d['text/html'].join('') : '';
      if (d['image/png'] || d['image/svg+xml'] || /<img|<svg/i.test(html)) figureOutputs++;
      for (const src of [d['image/svg+xml'], html]) {
        if (!src) continue;
        const text = Array.isArray(src) ? src.join('') : String(src);
        if (!/<svg/i.test(text)) continue;
        const doc = parser.parseFromString(text, 'text/html');
        for (const e of doc.querySelectorAll('svg title, svg desc')) {
          const t = e.textContent.trim();
          if (t.length >= 12) hidden.push(t);
        }
      }
    }
    const el = cell.output_area ? cell.output_area.element[0] : null;
    const areas = el ? [...el.querySelectorAll(':scope > .output_area, :scope .output > .output_area')] : [];
    const uniq = [...new Set(areas)];
    const figures = [];
    let shown = 0;
    for (const a of uniq) {
      let any = false;
      for (const f of a.querySelectorAll('img, svg')) {
        if (f.tagName.toLowerCase() === 'svg' && f.parentElement.closest('svg')) continue;
        const size = visible(f);
        if (size) { figures.push(size); any = true; }
      }
      if (any) shown++;
    }
    if (shown < figureOutputs) out.problems.push(`${where}: ${figureOutputs} outputs carry a figure, ${shown} show one`);
    const pageText = el ? el.innerText : '';
    for (const t of hidden) {
      if (pageText.includes(t)) out.problems.push(`${where}: the figure description "${t.slice(0, 60)}" shows as text`);
    }
    const errs = el ? el.querySelectorAll('.output_error') : [];
    if (errs.length !== errorOutputs) out.problems.push(`${where}: ${errorOutputs} error outputs in the file, ${errs.length} rendered as errors`);
    for (const e of errs) {
      if (!e.querySelector('span[class^="ansi-"], span[class*=" ansi-"], span[style*="color"]')) {
        out.problems.push(`${where}: an error output without colour`);
      }
    }
    if (/\u001b\[|\[[0-9;]+m/.test(pageText)) out.problems.push(`${where}: raw terminal escape codes in the text`);
    out.cells.push({
      outputs: uniq.length,
      figures,
      errors: errs.length,
      height: el ? Math.round(el.getBoundingClientRect().height) : 0,
    });
  });
  return out;
}

// compareLayout lists how a committed notebook's layout differs from its
// reference: the same code cells, output areas, error outputs and figure
// sizes (±3 px: anti-aliasing and rounding), output heights within
// max(24 px, 8%) (font metrics on another machine).
function compareLayout(got, want) {
  const diffs = [];
  if (got.length !== want.length) return [`${got.length} code cells, reference ${want.length}`];
  got.forEach((g, k) => {
    const w = want[k];
    const where = `cell ${k + 1}`;
    if (g.outputs !== w.outputs) diffs.push(`${where}: ${g.outputs} output areas, reference ${w.outputs}`);
    if (g.errors !== w.errors) diffs.push(`${where}: ${g.errors} errors, reference ${w.errors}`);
    if (g.figures.length !== w.figures.length) {
      diffs.push(`${where}: ${g.figures.length} figures, reference ${w.figures.length}`);
    } else {
      g.figures.forEach((f, j) => {
        const [gw, gh] = f.split('×').map(Number);
        const [ww, wh] = w.figures[j].split('×').map(Number);
        if (Math.abs(gw - ww) > 3 || Math.abs(gh - wh) > 3) diffs.push(`${where}: figure ${j + 1} is ${f}, reference ${w.figures[j]}`);
      });
    }
    if (Math.abs(g.height - w.height) > Math.max(24, 0.08 * w.height)) diffs.push(`${where}: outputs ${g.height} px high, reference ${w.height}`);
  });
  return diffs;
}

// Opens a notebook as committed (its outputs, untrusted, not run) and checks
// what a colleague would see.
async function checkCommitted(context, opts, name, prefix, left) {
  const pageErrors = [];
  const page = await context.newPage();
  page.on('pageerror', (e) => pageErrors.push(String(e.message || e).slice(0, 200)));
  page.setDefaultTimeout(30000);
  const c = (what, ok, detail) => check(prefix + what, ok, detail);
  const base = path.basename(name).replace(/\.ipynb$/, '');
  try {
    const url = `${opts.url}/notebooks/${name.split('/').map(encodeURIComponent).join('/')}?token=${opts.token}`;
    const resp = await page.goto(url, { waitUntil: 'load', timeout: Math.min(30000, left()) });
    if (!c('page loads', resp && resp.ok(), `HTTP ${resp ? resp.status() : 'none'} for /notebooks/${name}`)) return;
    const loaded = await pollPage(page, () => !!(window.Jupyter && Jupyter.notebook && Jupyter.notebook._fully_loaded), '', Math.min(30000, left()));
    if (!c('notebook loads', !!loaded, loaded ? '' : 'not loaded within 30 s')) return;
    await page.waitForTimeout(500); // images decode
    const out = await ev(page, inspectCommitted);
    c('opens not trusted, as a colleague meets it', !out.trusted, `trusted=${out.trusted}`);
    const nfig = out.cells.reduce((n, x) => n + x.figures.length, 0);
    const nerr = out.cells.reduce((n, x) => n + x.errors, 0);
    c(
      'every figure visible, no description leaks, errors render as errors',
      out.problems.length === 0,
      out.problems.length ? out.problems.slice(0, 8).join(' | ') : `${out.cells.length} code cells, ${nfig} figures, ${nerr} error outputs`,
    );
    const ref = path.join(opts.layout, base + '.json');
    if (opts['update-layout'] === '1') {
      fs.mkdirSync(opts.layout, { recursive: true });
      fs.writeFileSync(ref, JSON.stringify(out.cells, null, 1) + '\n');
      c('layout reference written', true, ref);
    } else if (!fs.existsSync(ref)) {
      c('layout matches its reference', false, `no reference ${ref}: write it with UPDATE_LAYOUT=1`);
    } else {
      const diffs = compareLayout(out.cells, JSON.parse(fs.readFileSync(ref, 'utf8')));
      c('layout matches its reference', diffs.length === 0, diffs.length ? diffs.slice(0, 8).join(' | ') + ' (if intended: UPDATE_LAYOUT=1)' : ref);
    }
    const shot = await fullPageShot(page, opts, base + '.committed.png', left);
    c('full-page screenshot of the committed view', fs.statSync(shot).size > 10000, shot);
  } finally {
    if (pageErrors.length) console.log(`note: ${prefix}page script errors: ${pageErrors.slice(0, 5).join(' | ')}`);
    await ev(page, () => Jupyter.notebook.session && Jupyter.notebook.session.delete()).catch(() => {});
    await bounded(page.close(), 10000, 'closing the page').catch(() => {});
  }
}

async function main() {
  const opts = parseArgs(process.argv.slice(2));
  const deadline = Date.now() + opts.timeout;
  // Last resort: exit, which makes playwright kill the browser it started.
  setTimeout(() => {
    check('time limit', false, `not finished within ${opts.timeout / 1000 + 3} s`);
    summary();
    process.exit(1);
  }, opts.timeout + 3000).unref();
  const left = () => Math.max(1000, deadline - Date.now());
  const names = (opts.notebooks || '').split(',').filter((x) => x);
  const committed = (opts.committed || '').split(',').filter((x) => x);

  const context = await chromium.launchPersistentContext(opts.profile, {
    executablePath: opts.chromium,
    headless: true,
    args: [
      '--headless',
      '--no-sandbox',
      '--disable-gpu',
      '--disable-background-networking',
      '--disable-component-update',
      '--disable-sync',
      '--no-first-run',
    ],
    viewport: { width: 1280, height: 900 },
  });
  try {
    for (const name of committed) {
      if (deadline - Date.now() < 5000) {
        check(`${name}: started`, false, 'no time left');
        continue;
      }
      const t0 = Date.now();
      await checkCommitted(context, opts, name, `${name} (as committed): `, left);
      console.log(`time: ${name} as committed ${((Date.now() - t0) / 1000).toFixed(1)} s`);
    }
    for (const name of names) {
      if (deadline - Date.now() < 5000) {
        check(`${name}: started`, false, 'no time left');
        continue;
      }
      const t0 = Date.now();
      await checkNotebook(context, opts, name, names.length > 1 ? `${name}: ` : '', left);
      console.log(`time: ${name} ${((Date.now() - t0) / 1000).toFixed(1)} s`);
    }
  } finally {
    await bounded(context.close(), 15000, 'closing the browser').catch((e) => console.log(`note: ${e.message}`));
  }
}

main()
  .catch((e) => {
    // eslint-disable-next-line no-control-regex
    const msg = String((e && e.message) || e).replace(/\x1b\[[0-9;]*m/g, '');
    check('browser session', false, msg.split('\n').slice(0, 4).join(' '));
  })
  .finally(() => {
    process.exitCode = summary() > 0 || results.length === 0 ? 1 : 0;
  });
