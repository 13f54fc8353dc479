// `curvewright report <spec...> -o report.html`: one self-contained HTML page for the specs (buildReportHtml of src/shared/html.ts
// with the bundled panel script dist/webview.js and media/panel.css inlined).
import * as fs from 'fs';
import * as path from 'path';
import { buildReportHtml } from '../shared/html';
import { isErrorReport, type RunResult } from '../engine/report';
import { UsageError, type Parsed } from './args';
import { inOrder, specsOf } from './fit';
import { errorText } from './format';
import { shown, writeAtomic, type Io } from './io';

/** The installed package's root folder (holds package.json with name "curvewright"). */
export function packageRoot(from = __dirname): string {
  let dir = from;
  for (;;) {
    const pj = path.join(dir, 'package.json');
    try {
      if ((JSON.parse(fs.readFileSync(pj, 'utf8')) as { name?: string }).name === 'curvewright') return dir;
    } catch {
      /* keep looking */
    }
    const up = path.dirname(dir);
    if (up === dir) return path.resolve(from, '..');
    dir = up;
  }
}

export function readAssets(root = packageRoot()): { js: string; css: string } {
  const jsFile = path.join(root, 'dist', 'webview.js');
  let js: string;
  try {
    js = fs.readFileSync(jsFile, 'utf8');
  } catch {
    throw new UsageError(`the report needs the panel script ${jsFile}, which is missing — run \`npm run build\` in ${root} first`);
  }
  let css = '';
  try {
    css = fs.readFileSync(path.join(root, 'media', 'panel.css'), 'utf8');
  } catch {
    css = ''; // the page still works without the panel's styles
  }
  return { js, css };
}

export async function reportCommand(parsed: Parsed, io: Io): Promise<number> {
  const { specs, jobs } = specsOf(parsed, io, 'report');
  const outGiven = typeof parsed.options.output === 'string' ? parsed.options.output : 'report.html';
  const out = path.resolve(io.cwd, outGiven);
  if (/\.(csv|tsv|txt)$/i.test(out) || out.endsWith('.fitspec.json') || specs.some(s => path.resolve(io.cwd, s) === out))
    throw new UsageError(`-o ${outGiven} looks like an input file — write the report to an .html file, e.g. -o report.html`);
  const assets = readAssets();
  const results: RunResult[] = [];
  let code = 0;
  await inOrder(specs, jobs, io, async (i, r) => {
    results.push(r);
    if (isErrorReport(r)) {
      code = 2;
      io.err(errorText(r, shown(specs[i], io.cwd)));
    }
  });
  const html = buildReportHtml(results, assets);
  await writeAtomic(out, html);
  const fitted = results.filter(r => !isErrorReport(r)).length;
  io.out(`wrote ${shown(out, io.cwd)} (${fitted} of ${results.length} spec${results.length === 1 ? '' : 's'} fitted)`);
  return code;
}
