// Module hooks that let Node load JupyterLab's packages as the bundlers
// they are built for do (webpack, as JupyterLab itself uses):
//   - relative imports without an extension ("./attachmentmodel") resolve to
//     a .js file or a directory's index.js;
//   - a package's "module" entry (ES modules) is preferred to its "main";
//   - a .js file with import or export statements is an ES module, whatever
//     its package.json says (what Node 22 does by itself);
//   - .svg files (icons) load as their text, .json files as their data and
//     .css files as nothing.
import { readFile } from 'node:fs/promises';
import { existsSync, readFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

function packageName(spec) {
  if (spec.startsWith('.') || spec.startsWith('/') || spec.includes(':')) return null;
  const parts = spec.split('/');
  return spec.startsWith('@') ? parts.slice(0, 2).join('/') : parts[0];
}

export async function resolve(specifier, context, next) {
  let resolved;
  try {
    resolved = await next(specifier, context);
  } catch (err) {
    if (err.code !== 'ERR_MODULE_NOT_FOUND' && err.code !== 'ERR_UNSUPPORTED_DIR_IMPORT') throw err;
    for (const suffix of ['.js', '/index.js']) {
      try {
        return await next(specifier + suffix, context);
      } catch {
        // try the next form
      }
    }
    throw err;
  }
  const name = packageName(specifier);
  if (name && specifier === name && resolved.url.startsWith('file:')) {
    let dir = dirname(fileURLToPath(resolved.url));
    while (dir !== '/' && !existsSync(join(dir, 'package.json'))) dir = dirname(dir);
    const pkg = JSON.parse(readFileSync(join(dir, 'package.json'), 'utf8'));
    if (pkg.name === name && typeof pkg.module === 'string') {
      for (const file of [pkg.module, pkg.module + '.js']) {
        if (existsSync(join(dir, file))) return { url: pathToFileURL(join(dir, file)).href, format: 'module', shortCircuit: true };
      }
    }
  }
  return resolved;
}

export async function load(url, context, next) {
  if (url.endsWith('.svg')) {
    const text = await readFile(new URL(url), 'utf8');
    return { format: 'module', source: 'export default ' + JSON.stringify(text) + ';', shortCircuit: true };
  }
  if (url.endsWith('.json') && url.includes('/node_modules/')) {
    const text = await readFile(new URL(url), 'utf8');
    return { format: 'module', source: 'export default ' + text + ';', shortCircuit: true };
  }
  if (url.endsWith('.css')) return { format: 'module', source: '', shortCircuit: true };
  const loaded = await next(url, context);
  if (loaded.format === 'commonjs' && url.startsWith('file:') && url.includes('/node_modules/')) {
    const source = loaded.source ?? await readFile(new URL(url), 'utf8');
    if (esmSyntax.test(source)) return { format: 'module', source, shortCircuit: true };
  }
  return loaded;
}

// esmSyntax finds a top-level import or export statement.
const esmSyntax = /^(import\s*[\w{*'"]|export\s+(\{|\*|default|const|let|var|function|class|async))/m;
