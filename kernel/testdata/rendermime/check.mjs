// Which representation of each nudge output does JupyterLab show? This test
// asks JupyterLab's own code: the rendermime registry of @jupyterlab/rendermime
// with its standard renderer factories and the factory of the JSON viewer
// (@jupyterlab/json-extension, which JupyterLab and Notebook 7 install by
// default and which takes application/json at rank 0, ahead of HTML at 50),
// run under jsdom.
//
//   node --import ./register.mjs check.mjs BUNDLES.json NOTEBOOK.ipynb...
//
// BUNDLES.json is written by the kernel's TestFrontEndBundles (make
// rendermime-test does both): the outputs of cells run through the Jupyter
// handler, as a saved notebook keeps them. The test checks that
//   - every output that carries a result, and every other display (progress
//     line, caution), is shown as text/html, for trusted
//     outputs (a live session) and untrusted ones (a notebook opened later);
//   - output on stdout is shown as plain text, by the renderer of text/plain;
//     warnings (stderr) and errors by one and the same renderer, so that an
//     error looks at least as prominent as a warning;
//   - no markdown cell of the shipped notebooks holds mathematics for MathJax
//     (JupyterLab's removeMath finds none), so their dollar signs print;
//   - the kernel's language_info names a CodeMirror language that JupyterLab
//     has and loads (@jupyterlab/codemirror's editor languages).
import { readFileSync } from 'node:fs';
import { JSDOM } from 'jsdom';

// The DOM the modules expect when they load, as JupyterLab's own Jest set-up
// provides it.
const dom = new JSDOM('<!doctype html><html><body></body></html>', { pretendToBeVisual: true, url: 'http://localhost/' });
for (const k of Object.getOwnPropertyNames(dom.window)) {
  if (!(k in globalThis)) {
    try {
      globalThis[k] = dom.window[k];
    } catch {
      // read-only globals of Node stay as they are
    }
  }
}
globalThis.window = dom.window;
dom.window.matchMedia = q => ({
  matches: false, media: q, onchange: null,
  addListener() {}, removeListener() {}, addEventListener() {}, removeEventListener() {},
  dispatchEvent() { return false; }
});
globalThis.matchMedia = dom.window.matchMedia;
if (!globalThis.DragEvent) globalThis.DragEvent = class DragEvent extends dom.window.MouseEvent {};
const warn = console.warn;
console.warn = (...args) => { if (!String(args[0]).includes('Clipboard API')) warn(...args); };

const rendermime = await import('@jupyterlab/rendermime');
const codemirror = await import('@jupyterlab/codemirror');
const jsonExtension = (await import('@jupyterlab/json-extension')).default;

const registry = new rendermime.RenderMimeRegistry({ initialFactories: rendermime.standardRendererFactories });
for (const ext of jsonExtension) registry.addFactory(ext.rendererFactory, ext.rank);
if (registry.preferredMimeType({ 'application/json': {}, 'text/html': '<p>x</p>' }, 'any') !== 'application/json') {
  throw new Error('the JSON viewer is not registered as JupyterLab registers it: this test would prove nothing');
}

const [bundlesFile, ...notebooks] = process.argv.slice(2);
const bundles = JSON.parse(readFileSync(bundlesFile, 'utf8'));
const failures = [];
let checked = 0;
const fail = msg => failures.push(msg);
const plainText = registry.getFactory('text/plain');
const stderrText = registry.getFactory('application/vnd.jupyter.stderr');

// A notebook opened later is untrusted: JupyterLab then asks for a "safe"
// representation ('ensure'); a live session's outputs are trusted ('any').
function expectHTML(what, data) {
  for (const safe of ['any', 'ensure']) {
    const got = registry.preferredMimeType(data, safe);
    checked++;
    if (got !== 'text/html') fail(`${what}: JupyterLab shows ${got} (${safe}), not text/html; types ${Object.keys(data).join(', ')}`);
  }
}

const kindsSeen = new Set();
for (const cell of bundles.cells) {
  const name = JSON.stringify(cell.source.split('\n')[0]);
  const streamOnly = cell.outputs.length > 0 && cell.outputs.every(o => o.output_type === 'stream');
  for (const output of cell.outputs) {
    // OutputModel is how JupyterLab's output area reads an nbformat output:
    // a stream or an error becomes application/vnd.jupyter.stdout or stderr.
    const model = new rendermime.OutputModel({ value: output, trusted: true });
    const data = model.data;
    if (output.output_type === 'stream' || output.output_type === 'error') {
      const got = registry.preferredMimeType(data, 'any');
      const stdout = output.output_type === 'stream' && output.name === 'stdout';
      checked++;
      if (!got || registry.getFactory(got) !== (stdout ? plainText : stderrText)) {
        fail(`cell ${name}: ${output.output_type} ${output.name || ''} is shown as ${got}, not as ${stdout ? 'plain text' : 'warnings are'}`);
      }
      continue;
    }
    if (streamOnly) fail(`cell ${name}: not stream-only`);
    const result = data['application/vnd.nudge.result+json'];
    if (result) kindsSeen.add(result.kind);
    expectHTML(`cell ${name}, ${result ? result.kind + ' result' : 'display'}`, data);
  }
  if (cell.source.startsWith('print') && !streamOnly) fail(`cell ${name}: a print cell is not stream-only`);
}
for (const kind of bundles.kinds) {
  if (!kindsSeen.has(kind)) fail(`no ${kind} result was checked`);
}
for (const { what, data } of bundles.live) expectHTML(what, data);

// Highlighting: a notebook's editor takes its language from language_info
// as CodeMirrorMimeTypeService reads it; text/plain means no highlighting.
{
  const languages = new codemirror.EditorLanguageRegistry();
  for (const lang of codemirror.EditorLanguageRegistry.getDefaultLanguages()) languages.addLanguage(lang);
  const info = bundles.language_info;
  const mime = new codemirror.CodeMirrorMimeTypeService(languages).getMimeTypeByLanguage(info);
  const lang = info.codemirror_mode ? await languages.getLanguage(info.codemirror_mode) : null;
  checked++;
  if (mime === 'text/plain' || !lang || !lang.support) {
    fail(`language_info ${JSON.stringify(info)}: JupyterLab's editor finds no language (${mime})`);
  }
}

// Markdown: JupyterLab hands what removeMath finds to MathJax.
for (const file of notebooks) {
  const nb = JSON.parse(readFileSync(file, 'utf8'));
  nb.cells.forEach((cell, i) => {
    if (cell.cell_type !== 'markdown') return;
    const text = Array.isArray(cell.source) ? cell.source.join('') : cell.source;
    const { math } = rendermime.removeMath(text);
    checked++;
    if (math.length > 0) fail(`${file}, cell ${i}: MathJax would typeset ${JSON.stringify(math)}`);
  });
}

if (failures.length > 0) {
  for (const f of failures) console.error('FAIL: ' + f);
  console.error(`rendermime: ${failures.length} of ${checked} checks failed`);
  process.exit(1);
}
console.log(`rendermime: ${checked} checks passed (results: ${[...kindsSeen].sort().join(', ')}; ` +
  `editor language ${bundles.language_info.codemirror_mode}; ${notebooks.length} notebooks' markdown)`);
process.exit(0);
