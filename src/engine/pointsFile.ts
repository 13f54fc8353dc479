// The spec's outputPoints switch: which files a results file becomes. "inline" (default) keeps the per-point arrays
// and the band in the results file; "sidecar" moves them to <output minus .json>.points.json beside it (named by
// the report's pointsFile), so that the main file holds what reviewers read; "omit" leaves them out.
import type { BandReport, FitReport, PointsReport, ReportMeta } from './report';

export type OutputPoints = 'inline' | 'sidecar' | 'omit';

/** The points file of a results file: results/x.fitresult.json -> results/x.fitresult.points.json. */
export function sidecarPath(output: string): string {
  return /\.json$/i.test(output) ? output.replace(/\.json$/i, '.points.json') : `${output}.points.json`;
}

export interface PointsSidecar {
  version: 1;
  /** always "curvewright-points" */
  kind: 'curvewright-points';
  spec: string;
  /** the same hashes as the results file it belongs to */
  meta: ReportMeta;
  models: { name: string; group?: string | null; points?: PointsReport; pointsOmitted?: boolean; band: BandReport | null }[];
}

/** The results file's report and, with "sidecar", the points file's content. */
export function splitReport(report: FitReport, mode: OutputPoints, sidecarName: string): { main: FitReport; sidecar: PointsSidecar | null } {
  if (mode === 'inline') return { main: report, sidecar: null };
  const sidecar: PointsSidecar = { version: 1, kind: 'curvewright-points', spec: report.spec, meta: report.meta, models: [] };
  const models = report.models.map(m => {
    const { points, band, ...rest } = m;
    const g = (m as { group?: string | null }).group;
    sidecar.models.push({ name: m.name, ...(g !== undefined ? { group: g } : {}), ...(points ? { points } : {}), ...(m.pointsOmitted ? { pointsOmitted: true } : {}), band });
    return { ...rest, pointsOmitted: true, band: null, ...(band ? { bandOmitted: true } : {}) };
  });
  const main: FitReport = { ...report, models, ...(mode === 'sidecar' ? { pointsFile: sidecarName } : {}) };
  return { main, sidecar: mode === 'sidecar' ? sidecar : null };
}

/** Why a points file does not belong to a report (null when it does). */
export function sidecarMismatch(report: FitReport, sidecar: unknown): string | null {
  const s = sidecar as PointsSidecar;
  if (!s || typeof s !== 'object' || s.kind !== 'curvewright-points' || !Array.isArray(s.models)) return 'it is not a Curvewright points file';
  if (!s.meta || s.meta.specHash !== report.meta.specHash || s.meta.dataHash !== report.meta.dataHash) return 'it was written for another run (its meta hashes differ)';
  if (s.models.length !== report.models.length || s.models.some((m, i) => m.name !== report.models[i].name)) return 'its models differ from the results file\'s';
  return null;
}

/** The report with the points file's arrays put back (the inverse of splitReport "sidecar"). */
export function joinSidecar(report: FitReport, sidecar: PointsSidecar): FitReport {
  const models = report.models.map((m, i) => {
    const s = sidecar.models[i];
    const { pointsOmitted: _p, bandOmitted: _b, ...rest } = m;
    return { ...rest, ...(s.points ? { points: s.points } : {}), ...(s.pointsOmitted ? { pointsOmitted: true } : {}), band: s.band };
  });
  return { ...report, models };
}
