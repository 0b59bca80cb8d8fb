// Installs hooks.mjs, so that Node can load JupyterLab's packages, which are
// built for a bundler (see hooks.mjs).
import { register } from 'node:module';

register('./hooks.mjs', import.meta.url);
