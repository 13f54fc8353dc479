// What the panel remembers and what every part of it reads: the user's choices (ViewState), the render options the
// page passes in, and the context the drawing modules (charts, tables, problems, exports) share. No drawing here.
import type { ErrorReport, FileLocation, FitReport, JsonPath, ModelReport, PointsReport, RunResult } from '../src/engine/report';
import type { ExportFormat } from '../src/shared/protocol';
import type { ThemeColors } from './theme';

/** What the user chose in the view; persisted by the panel so a reload restores it. */
export interface ViewState {
  selected?: string;
  /** the user's log-axis choice; unset: the spec's plot block, else automatic (see charts.ts) */
  logX?: boolean;
  logY?: boolean;
  /** residual plot shows raw residuals or standardized ones */
  residual: 'raw' | 'standardized';
}

/** Something to save: PNG as a data URL, CSV/JSON as text. */
export interface ExportPayload {
  format: ExportFormat;
  data: string;
  suggestedName: string;
  model?: string;
}

export interface RenderOptions {
  theme: ThemeColors;
  logX?: boolean;
  logY?: boolean;
  /** model to show bands and residuals for (default: the report's best, else the first) */
  selected?: string;
  residual?: 'raw' | 'standardized';
  /** a problem (or another spec-bound item) was clicked: its JSON path, and its place in the text when known */
  onReveal?(path: JsonPath, location?: FileLocation): void;
  /** a data point was clicked */
  onRevealRow?(row: number): void;
  /** an export button was pressed; without it the export buttons are hidden */
  onExport?(payload: ExportPayload): void;
  /** the user changed the selected model, a log toggle or the residual kind */
  onStateChange?(state: ViewState): void;
  /** ask for a refit now; without it no Refit button is shown */
  onRefit?(): void;
  /** draw the calibration read-outs card (unknowns, controls, limits, potency) under the tables: the panel does; the
   *  HTML report prints the same tables statically after its figures instead */
  readouts?: boolean;
  /** a short note beside the spec name, e.g. "unsaved edits" */
  note?: string;
  /** the spec's path as the header shows it (the panel: relative to the workspace); default the report's `spec` */
  specLabel?: string;
}

/** What the drawing modules read from the view: theme, options, the selected model, colours, and how to select. */
export interface ViewContext {
  readonly theme: ThemeColors;
  readonly opts: RenderOptions;
  selectedModel(r: FitReport): ModelReport | undefined;
  modelIndex(r: FitReport, name: string): number;
  modelColor(r: FitReport, name: string): string;
  /** make `name` the selected model (redraws) */
  select(name: string): void;
}

export function isError(r: RunResult): r is ErrorReport {
  return (r as ErrorReport).error !== undefined;
}

/** "dir/growth.fitspec.json" -> "growth" (file names of exports, the title of a report without one) */
export function baseName(spec: string): string {
  const file = spec.split(/[\\/]/).pop() || 'report';
  return file.replace(/\.fitspec\.jsonc?$/i, '').replace(/\.jsonc?$/i, '') || 'report';
}

/** The selected model: the user's choice, else the best, else the first converged, else the first. */
export function selectedModelOf(r: FitReport, selected: string | undefined): ModelReport | undefined {
  const byName = (n: string | null | undefined) => (n ? r.models.find(m => m.name === n) : undefined);
  return byName(selected) ?? byName(r.best) ?? r.models.find(m => m.status === 'converged') ?? r.models[0];
}

/** The points to draw: the selected model's, else any model's. */
export function pointsOf(r: FitReport, sel: ModelReport | undefined): PointsReport | undefined {
  return sel?.points ?? r.models.find(m => m.points)?.points;
}
