// Text of a starter spec (JSON with comments) for a CSV file. Kept apart from starter.ts (which reads the CSV with
// papaparse) so that the extension host, which only writes the spec, bundles no CSV reader.
import * as path from 'path';
import type { ModelSpec } from './report';
import { columnRef } from './spec';

function toPosix(p: string): string {
  return p.split(path.sep).join('/');
}

/**
 * Text of a starter spec (JSON with comments): data.file relative to the spec's folder, the chosen models,
 * output under results/ next to the spec.
 */
export function starterSpecText(opts: { csvPath: string; specPath: string; x: string; y: string; models: ModelSpec[]; decimal?: ','; groupBy?: string }): string {
  const specDir = path.dirname(path.resolve(opts.specPath));
  const dataRel = toPosix(path.relative(specDir, path.resolve(opts.csvPath))) || path.basename(opts.csvPath);
  const stem = path.basename(opts.specPath).replace(/\.fitspec\.json$/i, '').replace(/\.json$/i, '');
  const models = opts.models.length ? opts.models : [{ name: 'linear', builtin: 'linear' }];
  const modelLines = models.map(m => '    ' + JSON.stringify(m).replace(/^\{/, '{ ').replace(/\}$/, ' }').replace(/,"/g, ', "').replace(/":/g, '": '));
  const title = `${opts.y} vs ${opts.x} (${path.basename(opts.csvPath)})`;
  return [
    `// Curvewright fit spec for ${path.basename(opts.csvPath)}. Every model below is fitted and compared`,
    `// (AICc, F-tests for nested models, cross-validation); problems show in the editor and in \`curvewright check\`.`,
    `// Add { "name": ..., "builtin" | "polynomial" | "formula": ... } entries to "models", "predict": [x, ...] to`,
    `// predict, "solveFor": [y, ...] to read x off the curve, and "expect" to pin estimates for CI.`,
    `{`,
    `  "title": ${JSON.stringify(title)},`,
    `  "data": {`,
    `    "file": ${JSON.stringify(dataRel)}, // relative to this spec file`,
    `    "x": ${JSON.stringify(columnRef(opts.x))},`,
    `    "y": ${JSON.stringify(columnRef(opts.y))}${opts.decimal || opts.groupBy ? ',' : ''}`,
    ...(opts.decimal ? [`    "decimal": ${JSON.stringify(opts.decimal)}${opts.groupBy ? ',' : ''} // numbers like 0,25`] : []),
    ...(opts.groupBy ? [`    "groupBy": ${JSON.stringify(opts.groupBy)} // one curve per distinct value: every model is fitted to each group`] : []),
    `  },`,
    `  "models": [`,
    modelLines.join(',\n'),
    `  ],`,
    `  "output": ${JSON.stringify(`results/${stem}.fitresult.json`)}`,
    `}`,
    ``,
  ].join('\n');
}
