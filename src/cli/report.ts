// `curvewright report <spec...> -o report.html`: one self-contained HTML page for the specs (buildReportHtml of src/shared/html.ts
// with the bundled panel script dist/webview.js and media/panel.css inlined).
import * as fs from 'fs';
import * as path from 'path';
import { buildReportHtml } from '../shared/html';
import { isErrorReport, type RunResult } from '../engine/report';
import { UsageError, type Parsed } from './args';
import { inOrder, runInputs, specsOf } from './fit';
import { outputRefusal, REPORT_MARKER } from '../engine/paths';
import { errorText } from './format';
import { forHtmlReport } from './reportPoints';
import { ioReason, shown, writeAtomic, type Io } from './io';

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
  const { specs, jobs, boundary } = specsOf(parsed, io, 'report');
  const outGiven = typeof parsed.options.output === 'string' ? parsed.options.output : 'report.html';
  const out = path.resolve(io.cwd, outGiven);
  // -o is checked like a spec's output (boundary, .html, not an input of the run, not someone else's file) before any fit
  const refusal = await outputRefusal('-o', out, 'report', { root: boundary.root, trustOutside: boundary.trustPaths, inputs: await runInputs(specs.map(s => path.resolve(io.cwd, s))) });
  if (refusal) throw new UsageError(refusal);
  const assets = readAssets();
  const results: RunResult[] = [];
  let code = 0;
  await inOrder(specs, jobs, io, async (i, r) => {
    results.push(forHtmlReport(r)); // large data: a bounded, decimated set of points per model (the report says so)
    if (isErrorReport(r)) {
      code = 2;
      io.err(errorText(r, shown(specs[i], io.cwd)));
    }
  }, boundary);
  const html = buildReportHtml(results, assets).replace('<head>', `<head>\n${REPORT_MARKER}`);
  try {
    await writeAtomic(out, html);
  } catch (e) {
    throw new UsageError(`cannot write the report ${shown(out, io.cwd)}: ${ioReason(e)} — check that its folder exists, is writable and has space`);
  }
  const fitted = results.filter(r => !isErrorReport(r)).length;
  io.out(`wrote ${shown(out, io.cwd)} (${fitted} of ${results.length} spec${results.length === 1 ? '' : 's'} fitted)`);
  return code;
}
