// Draws one RunResult (FitReport or ErrorReport) into an element: Chart.js plots and tables. It only reads the
// report — no statistic is recomputed here and the solver is never imported. A second call on the same element
// updates in place (charts via chart.update('none')), so a refit does not make the panel flash.
import {
  Chart,
  ScatterController,
  LineElement,
  PointElement,
  LinearScale,
  LogarithmicScale,
  Tooltip,
  Filler,
} from 'chart.js';
import type { ChartConfiguration, ChartDataset, Plugin, Scale, TooltipItem, TooltipModel } from 'chart.js';
import type {
  ErrorReport,
  FitReport,
  JsonPath,
  ModelReport,
  PointsReport,
  Problem,
  RunResult,
} from '../src/engine/report';
import type { ExportFormat } from '../src/shared/protocol';
import { decimateLine, decimateScatter } from './decimate';
import { boxSwatch, h, lineSwatch, setChildren, type Child } from './dom';
import { MISSING, fmtEstimate, fmtInt, fmtInterval, fmtNum, fmtP, fmtPct, fmtR2 } from '../src/shared/numberFormat';
import { dashFor, withAlpha, type ThemeColors } from './theme';

Chart.register(ScatterController, LineElement, PointElement, LinearScale, LogarithmicScale, Tooltip, Filler);

// ------------------------------------------------------------------ public API

/** What the user chose in the view; persisted by the panel so a reload restores it. */
export interface ViewState {
  selected?: string;
  logX: boolean;
  logY: boolean;
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
  /** a problem (or another spec-bound item) was clicked */
  onReveal?(path: JsonPath): void;
  /** a data point was clicked */
  onRevealRow?(row: number): void;
  /** an export button was pressed; without it the export buttons are hidden */
  onExport?(payload: ExportPayload): void;
  /** the user changed the selected model, a log toggle or the residual kind */
  onStateChange?(state: ViewState): void;
  /** ask for a refit now; without it no Refit button is shown */
  onRefit?(): void;
  /** a short note beside the spec name, e.g. "unsaved edits" */
  note?: string;
}

const views = new WeakMap<HTMLElement, ReportView>();

/** Draw `result` into `root`; on an element drawn before, update it in place and return the same view. */
export function renderReport(root: HTMLElement, result: RunResult, opts: RenderOptions): ReportView {
  let view = views.get(root);
  if (!view) {
    view = new ReportView(root, opts);
    views.set(root, view);
  }
  view.update(result, opts);
  return view;
}

/** The view drawn into `root`, if any. */
export function viewOf(root: HTMLElement): ReportView | undefined {
  return views.get(root);
}

// ------------------------------------------------------------------ helpers

type Pt = { x: number; y: number; i: number };
type Kind = { kind: 'points' | 'curve' | 'band' | 'ref'; model?: string };

function isError(r: RunResult): r is ErrorReport {
  return (r as ErrorReport).error !== undefined;
}

function baseName(spec: string): string {
  const file = spec.split(/[\\/]/).pop() || 'report';
  return file.replace(/\.fitspec\.jsonc?$/i, '').replace(/\.jsonc?$/i, '') || 'report';
}

/** ["models", 0, "params", "K"] -> "models[0].params.K" */
export function formatPath(path: JsonPath | undefined): string {
  if (!path || path.length === 0) return '(spec)';
  let s = '';
  for (const p of path) s += typeof p === 'number' ? `[${p}]` : s ? `.${p}` : p;
  return s;
}

function locationText(loc: Problem['location']): string {
  if (!loc) return '';
  let s = loc.file;
  if (loc.line !== undefined) s += `:${loc.line}`;
  if (typeof loc.column === 'number') s += `:${loc.column}`;
  else if (typeof loc.column === 'string') s += ` (column ${loc.column})`;
  if (loc.row !== undefined) s += `, row ${loc.row}`;
  return s;
}

const SEVERITY_ICON: Record<Problem['severity'], string> = { error: '\u2716', warning: '\u25b2', info: '\u2139' };
const SEVERITY_RANK: Record<Problem['severity'], number> = { error: 0, warning: 1, info: 2 };

function csvCell(v: unknown): string {
  if (v === null || v === undefined) return '';
  // spreadsheet formula injection (common practice): a text cell starting with = + - @ tab or CR gets a leading '
  // so that a spreadsheet shows it as text; numbers (also negative ones) stay numbers
  const s = typeof v === 'number' ? String(v) : /^[=+\-@\t\r]/.test(String(v)) ? `'${String(v)}` : String(v);
  return /[",\n\r]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

/** One CSV row per parameter of every model, full precision (the display rounds, the export never does). */
export function parametersCsv(report: FitReport): string {
  const head = ['model', 'parameter', 'value', 'se', 'rel_se', 'ci_low', 'ci_high', 'profile_low', 'profile_high', 't', 'p', 'fixed', 'at_bound', 'status'];
  const lines = [head.join(',')];
  for (const m of report.models) {
    for (const name of m.paramOrder) {
      const p = m.params[name];
      if (!p) continue;
      const rel = typeof p.se === 'number' && typeof p.value === 'number' && p.value !== 0 ? p.se / Math.abs(p.value) : null;
      lines.push([m.name, name, p.value, p.se, rel, p.ci?.[0], p.ci?.[1], p.profileCi?.[0], p.profileCi?.[1], p.t, p.p, p.fixed, p.atBound ?? '', m.status]
        .map(csvCell).join(','));
    }
  }
  return lines.join('\n') + '\n';
}

/** JSON text of a report; typed arrays (as the panel may receive points) become plain arrays. */
export function reportJson(result: RunResult): string {
  return JSON.stringify(result, (_k, v) => (ArrayBuffer.isView(v) && !(v instanceof DataView) ? Array.from(v as unknown as ArrayLike<number>) : v), 2) + '\n';
}

function xVariable(m: ModelReport | undefined, pts: PointsReport | undefined): string | undefined {
  if (m?.band?.variable) return m.band.variable;
  const keys = pts ? Object.keys(pts.x) : [];
  return keys[0];
}

function positiveAny(a: ArrayLike<number> | undefined): boolean {
  if (!a) return false;
  for (let i = 0; i < a.length; i++) if (a[i]! > 0) return true;
  return false;
}

// ------------------------------------------------------------------ the view

export class ReportView {
  readonly root: HTMLElement;
  private opts: RenderOptions;
  private theme: ThemeColors;
  private result: RunResult | null = null;
  private st: ViewState;
  private mainChart: Chart<'scatter', Pt[]> | null = null;
  private residChart: Chart<'scatter', Pt[]> | null = null;
  private mainKinds: Kind[] = [];
  private residKinds: Kind[] = [];
  private openModels = new Set<string>();
  private allProblems = false;
  private residHead: HTMLElement | null = null;
  private closedModels = new Set<string>();

  private readonly el: {
    wrap: HTMLElement; head: HTMLElement; busy: HTMLElement; actions: HTMLElement; error: HTMLElement; problems: HTMLElement;
    plot: HTMLElement; chips: HTMLElement; toggles: HTMLElement; legend: HTMLElement; mainBox: HTMLElement; residBox: HTMLElement;
    mainCanvas: HTMLCanvasElement; residCanvas: HTMLCanvasElement; plotNote: HTMLElement; body: HTMLElement;
    logX: HTMLButtonElement; logY: HTMLButtonElement; residKind: HTMLButtonElement;
  };

  constructor(root: HTMLElement, opts: RenderOptions) {
    this.root = root;
    this.opts = opts;
    this.theme = opts.theme;
    this.st = { selected: opts.selected, logX: !!opts.logX, logY: !!opts.logY, residual: opts.residual ?? 'raw' };
    const logX = h('button', { class: 'cw-toggle', type: 'button', 'aria-pressed': 'false', title: 'Logarithmic x axis' }, 'log x');
    const logY = h('button', { class: 'cw-toggle', type: 'button', 'aria-pressed': 'false', title: 'Logarithmic y axis' }, 'log y');
    const residKind = h('button', { class: 'cw-toggle', type: 'button', 'aria-pressed': 'false', title: 'Show standardized residuals' }, 'standardized');
    logX.addEventListener('click', () => this.setState({ logX: !this.st.logX }));
    logY.addEventListener('click', () => this.setState({ logY: !this.st.logY }));
    residKind.addEventListener('click', () => this.setState({ residual: this.st.residual === 'raw' ? 'standardized' : 'raw' }));
    const mainCanvas = h('canvas', { class: 'cw-canvas', role: 'img', 'aria-label': 'Data and fitted curves' });
    const residCanvas = h('canvas', { class: 'cw-canvas', role: 'img', 'aria-label': 'Residuals of the selected model' });
    const mainBox = h('div', { class: 'cw-chart cw-chart-main' }, mainCanvas);
    const residBox = h('div', { class: 'cw-chart cw-chart-resid' }, residCanvas);
    const el = {
      wrap: h('div', { class: 'cw-report' }),
      head: h('header', { class: 'cw-head' }),
      busy: h('span', { class: 'cw-busy', role: 'status', 'aria-live': 'polite' }),
      actions: h('div', { class: 'cw-actions' }),
      error: h('section', { class: 'cw-error', role: 'alert' }),
      problems: h('section', { class: 'cw-problems' }),
      plot: h('section', { class: 'cw-card cw-plot' }),
      chips: h('div', { class: 'cw-chips', role: 'group', 'aria-label': 'Models' }),
      toggles: h('div', { class: 'cw-toggles' }, logX, logY),
      legend: h('div', { class: 'cw-legend' }),
      mainBox, residBox, mainCanvas, residCanvas,
      plotNote: h('div', { class: 'cw-note' }),
      body: h('div', { class: 'cw-body' }),
      logX, logY, residKind,
    };
    this.el = el;
    const residHead = h('div', { class: 'cw-resid-head' }, h('span', { class: 'cw-axis-title' }, 'Residuals'), residKind);
    this.residHead = residHead;
    el.plot.append(h('div', { class: 'cw-plot-bar' }, el.chips, el.toggles), el.legend, mainBox, residHead, residBox, el.plotNote);
    el.wrap.append(el.head, el.error, el.problems, el.plot, el.body);
    root.replaceChildren(el.wrap);
  }

  /** The view state (selected model, toggles). */
  state(): ViewState {
    return { ...this.st };
  }

  /** The report currently drawn. */
  current(): RunResult | null {
    return this.result;
  }

  /** Draw a new report (or the same one with new options) in place. */
  update(result: RunResult, opts?: Partial<RenderOptions>): void {
    if (opts) {
      this.opts = { ...this.opts, ...opts };
      if (opts.theme) this.theme = opts.theme;
      if (opts.logX !== undefined) this.st.logX = opts.logX;
      if (opts.logY !== undefined) this.st.logY = opts.logY;
      if (opts.selected !== undefined) this.st.selected = opts.selected;
      if (opts.residual !== undefined) this.st.residual = opts.residual;
    }
    this.rememberOpen();
    this.result = result;
    this.draw();
  }

  /** Re-colour for a new theme without rebuilding the layout. */
  setTheme(theme: ThemeColors): void {
    this.theme = theme;
    this.opts = { ...this.opts, theme };
    this.rememberOpen();
    if (this.result) this.draw();
  }

  /** Show or clear the "fitting…" indicator. */
  setBusy(busy: boolean, message?: string): void {
    this.el.busy.textContent = busy ? message || 'Fitting\u2026' : '';
    this.el.wrap.classList.toggle('cw-is-busy', busy);
  }

  /** The plots (data + residuals) as one PNG data URL on the theme's background, under a strip naming the report,
   *  the selected model and each curve (colour and dash), so the image stands on its own. */
  plotImage(): string | null {
    const a = this.mainChart, b = this.residChart;
    const r = this.result;
    if (!a || !r || isError(r)) return a ? a.toBase64Image('image/png', 1) : null;
    const ca = a.canvas, cb = b && !this.el.residBox.hidden ? b.canvas : null;
    const scale = ca.width / Math.max(1, ca.clientWidth || ca.width);
    const strip = Math.round(46 * scale);
    const out = document.createElement('canvas');
    out.width = Math.max(ca.width, cb?.width ?? 0);
    out.height = strip + ca.height + (cb ? cb.height : 0);
    const ctx = out.getContext('2d');
    if (!ctx) return a.toBase64Image('image/png', 1);
    const t = this.theme;
    ctx.fillStyle = t.background;
    ctx.fillRect(0, 0, out.width, out.height);
    ctx.textBaseline = 'middle';
    ctx.fillStyle = t.foreground;
    ctx.font = `600 ${Math.round(14 * scale)}px ${t.fontFamily}`;
    const pad = Math.round(12 * scale);
    ctx.fillText(r.title || baseName(r.spec), pad, Math.round(14 * scale));
    ctx.font = `${Math.round(11.5 * scale)}px ${t.fontFamily}`;
    let x = pad;
    const y = Math.round(34 * scale);
    const sel = this.selectedModel(r);
    r.models.forEach((m, i) => {
      if (m.status !== 'converged') return;
      ctx.strokeStyle = this.modelColor(r, m.name);
      ctx.lineWidth = t.lineWidth * scale;
      ctx.setLineDash(dashFor(i).map(d => d * scale));
      ctx.beginPath();
      ctx.moveTo(x, y);
      ctx.lineTo(x + 22 * scale, y);
      ctx.stroke();
      ctx.setLineDash([]);
      x += 26 * scale;
      const label = `${m.name}${m.name === r.best ? ' \u2605' : ''}${m.name === sel?.name ? ' (bands, residuals)' : ''}`;
      ctx.fillStyle = t.foreground;
      ctx.fillText(label, x, y);
      x += ctx.measureText(label).width + 16 * scale;
    });
    ctx.drawImage(ca, 0, strip);
    if (cb) ctx.drawImage(cb, 0, strip + ca.height);
    return out.toDataURL('image/png');
  }

  /** Remove the charts and the DOM. */
  destroy(): void {
    this.mainChart?.destroy();
    this.residChart?.destroy();
    this.mainChart = this.residChart = null;
    views.delete(this.root);
    this.root.replaceChildren();
  }

  /** Remember which model sections the user opened or closed, before they are rebuilt. */
  private rememberOpen(): void {
    for (const d of Array.from(this.el.body.querySelectorAll<HTMLDetailsElement>('details[data-model]'))) {
      const name = d.dataset.model!;
      if (d.open) { this.openModels.add(name); this.closedModels.delete(name); }
      else { this.closedModels.add(name); this.openModels.delete(name); }
    }
  }

  private setState(patch: Partial<ViewState>): void {
    this.rememberOpen();
    if (patch.selected !== undefined && patch.selected !== this.st.selected) {
      // Selecting a model opens its section (unless the user closes it again later).
      this.closedModels.delete(patch.selected);
      this.openModels.add(patch.selected);
    }
    this.st = { ...this.st, ...patch };
    if (this.result) this.draw();
    this.opts.onStateChange?.(this.state());
  }

  private selectedModel(r: FitReport): ModelReport | undefined {
    const byName = (n: string | null | undefined) => (n ? r.models.find(m => m.name === n) : undefined);
    return byName(this.st.selected) ?? byName(r.best) ?? r.models.find(m => m.status === 'converged') ?? r.models[0];
  }

  private modelIndex(r: FitReport, name: string): number {
    return Math.max(0, r.models.findIndex(m => m.name === name));
  }

  private modelColor(r: FitReport, name: string): string {
    const s = this.theme.series;
    return s[this.modelIndex(r, name) % s.length] ?? this.theme.accent;
  }

  // ---------------------------------------------------------------- drawing

  private draw(): void {
    const r = this.result;
    if (!r) return;
    const el = this.el;
    el.wrap.classList.toggle('cw-hc', this.theme.highContrast);
    this.drawHead(r);
    if (isError(r)) {
      el.error.hidden = false;
      setChildren(el.error, this.errorBox(r));
      el.problems.hidden = true;
      el.plot.hidden = true;
      el.body.replaceChildren();
      return;
    }
    el.error.hidden = true;
    el.error.replaceChildren();
    this.drawProblems(r);
    el.plot.hidden = false;
    const sel = this.selectedModel(r);
    if (sel && this.st.selected !== undefined && this.st.selected !== sel.name) this.st.selected = sel.name;
    this.drawChips(r, sel);
    this.drawCharts(r, sel);
    this.drawBody(r, sel);
  }

  private drawHead(r: RunResult): void {
    const title = !isError(r) && r.title ? r.title : baseName(r.spec);
    const sub: Child[] = [h('code', null, r.spec)];
    if (this.opts.note) sub.push(' ', h('span', { class: 'cw-badge cw-badge-warn' }, this.opts.note));
    if (!isError(r)) {
      sub.push(' \u00b7 ', `${fmtNum(r.confidence * 100, 3)}\u2009% intervals`);
      if (r.best) sub.push(' \u00b7 best: ', h('strong', null, r.best));
    }
    this.el.actions.replaceChildren();
    const onRefit = this.opts.onRefit;
    if (onRefit) this.el.actions.append(h('button', { class: 'cw-btn', type: 'button', title: 'Fit this spec again now', onclick: () => onRefit() }, 'Refit'));
    const onExport = this.opts.onExport;
    if (onExport) {
      const base = baseName(r.spec);
      if (!isError(r)) {
        this.el.actions.append(
          h('button', { class: 'cw-btn', type: 'button', title: 'Save the plots as a PNG image', onclick: () => {
            const data = this.plotImage();
            if (data) onExport({ format: 'png', data, suggestedName: `${base}-plot.png`, model: this.st.selected });
          } }, 'PNG'),
          h('button', { class: 'cw-btn', type: 'button', title: 'Save the parameters of every model as CSV', onclick: () => {
            onExport({ format: 'csv', data: parametersCsv(r), suggestedName: `${base}-parameters.csv` });
          } }, 'CSV'),
        );
      }
      this.el.actions.append(h('button', { class: 'cw-btn', type: 'button', title: 'Save the full report as JSON', onclick: () => {
        onExport({ format: 'json', data: reportJson(r), suggestedName: `${base}.fitresult.json` });
      } }, 'JSON'));
    }
    this.el.head.replaceChildren(
      h('div', { class: 'cw-head-text' }, h('h1', { class: 'cw-title' }, title), h('div', { class: 'cw-sub' }, sub)),
      h('div', { class: 'cw-head-side' }, this.el.busy, this.el.actions),
    );
  }

  private errorBox(r: ErrorReport): Child[] {
    const e = r.error;
    const where = e.location ? locationText(e.location) : e.path ? formatPath(e.path) : '';
    const out: Child[] = [
      h('div', { class: 'cw-error-title' }, h('span', { class: 'cw-sev-icon', 'aria-hidden': 'true' }, SEVERITY_ICON.error), ' This spec could not be run'),
      h('p', { class: 'cw-error-msg' }, e.message),
    ];
    if (where) {
      const reveal = this.opts.onReveal;
      out.push(h('p', { class: 'cw-error-where' }, 'at ',
        reveal && e.path ? h('button', { class: 'cw-link', type: 'button', onclick: () => reveal(e.path!) }, where) : h('code', null, where)));
    }
    if (e.problems?.length) out.push(this.problemList(e.problems.map(p => ({ p }))));
    return out;
  }

  private drawProblems(r: FitReport): void {
    const all: { p: Problem; model?: string }[] = r.problems.map(p => ({ p }));
    for (const m of r.models) for (const p of m.problems) all.push({ p, model: m.name });
    all.sort((a, b) => SEVERITY_RANK[a.p.severity] - SEVERITY_RANK[b.p.severity]);
    const el = this.el.problems;
    if (all.length === 0) {
      el.hidden = false;
      el.replaceChildren(h('div', { class: 'cw-ok' }, h('span', { class: 'cw-ok-icon', 'aria-hidden': 'true' }, '\u2714'), ' No problems found'));
      return;
    }
    const counts = { error: 0, warning: 0, info: 0 };
    for (const x of all) counts[x.p.severity]++;
    const summary = (['error', 'warning', 'info'] as const).filter(s => counts[s]).map(s => `${counts[s]} ${s}${counts[s] > 1 ? 's' : ''}`).join(', ');
    el.hidden = false;
    // A long list would push the plot out of sight: show the most severe first and fold the rest (report-level
    // problems and the selected model's come before other models' at the same severity).
    const sel = this.selectedModel(r)?.name;
    const weight = (x: { p: Problem; model?: string }) => SEVERITY_RANK[x.p.severity] * 3 + (x.model === undefined ? 0 : x.model === sel ? 1 : 2);
    all.sort((a, b) => weight(a) - weight(b));
    // Errors and warnings show first (at most LIMIT); information notes fold behind the button unless they are all
    // there is, so hints do not push the plot out of sight.
    const LIMIT = 6;
    const primary = all.filter(x => x.p.severity !== 'info').length;
    const cap = primary > 0 ? Math.min(LIMIT, primary) : Math.min(2, all.length);
    const foldable = all.length > cap + (primary > LIMIT || primary === 0 ? 1 : 0);
    const folded = !this.allProblems && foldable;
    const shown = folded ? all.slice(0, cap) : all;
    const toggle = foldable
      ? h('button', { class: 'cw-link cw-more', type: 'button', 'aria-expanded': folded ? 'false' : 'true', onclick: () => { this.allProblems = !this.allProblems; this.drawProblems(r); } },
        folded ? `Show all ${all.length} problems` : 'Show fewer')
      : null;
    el.replaceChildren(h('h2', { class: 'cw-h2' }, 'Problems ', h('span', { class: 'cw-count' }, summary)), this.problemList(shown));
    if (toggle) el.append(toggle);
  }

  private problemList(items: { p: Problem; model?: string }[]): HTMLElement {
    const reveal = this.opts.onReveal;
    const revealRow = this.opts.onRevealRow;
    return h('ul', { class: 'cw-problem-list' }, items.map(({ p, model }) => {
      const where = p.location ? locationText(p.location) : formatPath(p.path);
      const body: Child[] = [
        h('span', { class: `cw-sev cw-sev-${p.severity}` }, h('span', { class: 'cw-sev-icon', 'aria-hidden': 'true' }, SEVERITY_ICON[p.severity]), ` ${p.severity}`),
        h('span', { class: 'cw-problem-msg' }, p.message),
        h('span', { class: 'cw-problem-meta' }, model ? h('span', { class: 'cw-tag' }, model) : null, h('code', null, p.code), ' ', where),
      ];
      const row = p.location?.row ?? (p.rows && p.rows.length === 1 ? p.rows[0] : undefined);
      const li = h('li', { class: `cw-problem cw-problem-${p.severity}` });
      if (reveal) {
        li.append(h('button', { class: 'cw-problem-btn', type: 'button', title: `Show ${formatPath(p.path)} in the spec`, onclick: () => reveal(p.path) }, body));
      } else {
        li.append(h('div', { class: 'cw-problem-btn' }, body));
      }
      if (revealRow && row !== undefined) {
        li.append(h('button', { class: 'cw-link cw-row-link', type: 'button', title: 'Open the data file at this row', onclick: () => revealRow(row) }, `row ${row}`));
      }
      return li;
    }));
  }

  private drawChips(r: FitReport, sel: ModelReport | undefined): void {
    const t = this.theme;
    this.el.chips.replaceChildren(...r.models.map((m, i) => {
      const selected = m.name === sel?.name;
      const color = this.modelColor(r, m.name);
      return h('button', {
        class: `cw-chip${selected ? ' cw-chip-on' : ''}${m.status === 'failed' ? ' cw-chip-failed' : ''}`,
        type: 'button', 'aria-pressed': selected ? 'true' : 'false',
        title: `${m.formula}${m.status === 'failed' ? ' (fit failed)' : ''}`,
        'data-model': m.name,
        onclick: () => this.setState({ selected: m.name }),
      }, lineSwatch(color, dashFor(i), t.lineWidth), ' ', m.name, r.best === m.name ? h('span', { class: 'cw-best-mark', title: 'best model' }, ' \u2605') : null,
      m.status === 'failed' ? h('span', { class: 'cw-failed-mark' }, ' failed') : null);
    }));
  }

  private drawCharts(r: FitReport, sel: ModelReport | undefined): void {
    const t = this.theme;
    const el = this.el;
    Chart.defaults.font.family = t.fontFamily;
    Chart.defaults.font.size = Math.max(10, Math.round(t.fontSize * 0.9));
    Chart.defaults.color = t.foreground;

    const pts = sel?.points ?? r.models.find(m => m.points)?.points;
    const xVars = pts ? Object.keys(pts.x) : sel?.band?.variable ? [sel.band.variable] : [];
    const multi = xVars.length > 1 && !sel?.band;
    const xVar = xVariable(sel, pts) ?? 'x';
    const xs: ArrayLike<number> | undefined = multi ? sel?.points?.fitted : pts?.x[xVar];

    // Log toggles are offered only when the data have positive values on that axis.
    const canLogX = positiveAny(xs) || positiveAny(sel?.band?.x);
    const canLogY = positiveAny(pts?.y) || positiveAny(sel?.band?.fit);
    const logX = this.st.logX && canLogX, logY = this.st.logY && canLogY;
    el.logX.disabled = !canLogX;
    el.logY.disabled = !canLogY;
    el.logX.setAttribute('aria-pressed', String(logX));
    el.logY.setAttribute('aria-pressed', String(logY));
    el.logX.title = canLogX ? 'Logarithmic x axis' : 'No positive x values: a log axis is not possible';
    el.logY.title = canLogY ? 'Logarithmic y axis' : 'No positive y values: a log axis is not possible';

    const width = Math.max(200, el.mainBox.clientWidth || 800);
    const height = Math.max(120, el.mainBox.clientHeight || 340);
    const datasets: ChartDataset<'scatter', Pt[]>[] = [];
    const kinds: Kind[] = [];
    const notes: string[] = [];
    const okX = (v: number) => Number.isFinite(v) && (!logX || v > 0);
    const yv = (v: number) => (Number.isFinite(v) && (!logY || v > 0) ? v : NaN);
    const band = !multi && sel?.status === 'converged' ? sel.band : null;
    // On a log y axis a band edge at or below zero is drawn at a floor a decade under the smallest positive value
    // shown, so the band still reads as reaching down past the plot (a gap would look like a narrow band).
    let floor = NaN;
    if (logY) {
      let minPos = Infinity;
      const scan = (a: ArrayLike<number> | undefined) => { if (a) for (let i = 0; i < a.length; i++) if (a[i]! > 0 && a[i]! < minPos) minPos = a[i]!; };
      scan(pts?.y); scan(band?.fit); scan(band?.ciLow); scan(band?.piLow);
      if (Number.isFinite(minPos)) floor = minPos / 10;
    }
    const line = (xa: ArrayLike<number>, ya: ArrayLike<number>, clampLow = false): Pt[] => {
      const keep = decimateLine(xa, ya, width, { x: logX });
      const out: Pt[] = [];
      for (const i of keep) {
        if (!okX(xa[i]!)) continue;
        const v = ya[i]!;
        out.push({ x: xa[i]!, y: clampLow && logY && Number.isFinite(v) && v <= 0 ? floor : yv(v), i });
      }
      return out;
    };
    const conf = `${fmtNum(r.confidence * 100, 3)}\u2009%`;
    const legend: Child[] = [];

    if (band && band.x.length) {
      const bandLine = { showLine: true, pointRadius: 0, pointHoverRadius: 0, borderWidth: 0, tension: 0, order: 30 } as const;
      const base = this.modelColor(r, sel!.name);
      const piFill = withAlpha(base, t.piAlpha), ciFill = withAlpha(base, t.ciAlpha);
      datasets.push({ ...bandLine, label: 'prediction band', data: line(band.x, band.piHigh), fill: '+1', backgroundColor: piFill, borderColor: piFill });
      datasets.push({ ...bandLine, label: 'prediction band (low)', data: line(band.x, band.piLow, true), fill: false, borderColor: piFill });
      datasets.push({ ...bandLine, label: 'confidence band', data: line(band.x, band.ciHigh), fill: '+1', backgroundColor: ciFill, borderColor: ciFill });
      datasets.push({ ...bandLine, label: 'confidence band (low)', data: line(band.x, band.ciLow, true), fill: false, borderColor: ciFill });
      kinds.push({ kind: 'band' }, { kind: 'band' }, { kind: 'band' }, { kind: 'band' });
      if (t.highContrast) {
        // Outline the bands too, so they read without relying on fill opacity.
        for (const d of datasets.slice(-4)) { d.borderWidth = 1; d.borderDash = [2, 3]; d.borderColor = t.foreground; }
      }
      legend.push(h('span', { class: 'cw-legend-item' }, boxSwatch(withAlpha(base, Math.min(1, t.ciAlpha + t.piAlpha))), ` ${conf} confidence band (${sel!.name})`),
        h('span', { class: 'cw-legend-item' }, boxSwatch(piFill), ` ${conf} prediction band`));
    }

    if (multi) {
      // Several x variables: observed against fitted, with the identity line.
      const f = sel?.points?.fitted, y = sel?.points?.y;
      if (f && y) {
        let lo = Infinity, hi = -Infinity;
        for (let i = 0; i < f.length; i++) for (const v of [f[i]!, y[i]!]) if (okX(v) && Number.isFinite(yv(v))) { if (v < lo) lo = v; if (v > hi) hi = v; }
        if (lo < hi) {
          datasets.push({ label: 'y = fitted', data: [{ x: lo, y: lo, i: -1 }, { x: hi, y: hi, i: -1 }], showLine: true, pointRadius: 0, borderColor: this.modelColor(r, sel!.name), borderWidth: t.lineWidth, borderDash: [6, 4], order: 20 });
          kinds.push({ kind: 'ref' });
        }
      }
      notes.push(`${xVars.length} x variables (${xVars.join(', ')}): observed y against fitted values of ${sel?.name ?? 'the model'}.`);
    } else {
      r.models.forEach((m, i) => {
        if (m.status !== 'converged') return;
        let data: Pt[] = [];
        if (m.band && m.band.x.length) data = line(m.band.x, m.band.fit);
        else if (m.points) {
          const vx = m.points.x[xVar];
          if (vx) {
            const order = Array.from({ length: vx.length }, (_, k) => k).sort((a, b) => vx[a]! - vx[b]!);
            const sx = order.map(k => vx[k]!), sy = order.map(k => m.points!.fitted[k]!);
            data = line(sx, sy);
          }
        }
        if (!data.length) return;
        const selected = m.name === sel?.name;
        datasets.push({
          label: m.name, data, showLine: true, pointRadius: 0, pointHoverRadius: 0, tension: 0,
          borderColor: this.modelColor(r, m.name), borderWidth: selected ? t.lineWidth * 1.6 : t.lineWidth,
          borderDash: dashFor(i), order: selected ? 11 : 20, fill: false,
        });
        kinds.push({ kind: 'curve', model: m.name });
      });
    }

    let shown = 0, total = 0;
    if (pts || (multi && sel?.points)) {
      const px = multi ? sel!.points!.fitted : pts!.x[xVar];
      const py = multi ? sel!.points!.y : pts!.y;
      if (px) {
        total = py.length;
        const keep = decimateScatter(px, py, { columns: width, rows: height, logX, logY });
        const data: Pt[] = new Array(keep.length);
        for (let k = 0; k < keep.length; k++) { const i = keep[k]!; data[k] = { x: px[i]!, y: py[i]!, i }; }
        shown = data.length;
        // Many points: small and translucent (a density), drawn under the curves so the fits stay visible.
        const big = shown > 2000;
        datasets.push({
          label: 'data', data, showLine: false, order: big ? 25 : 0,
          pointRadius: big ? 1.3 : t.highContrast ? 3.5 : 3, pointHoverRadius: big ? 4 : 6, pointHitRadius: big ? 3 : 6,
          pointBackgroundColor: t.highContrast && !big ? t.background : withAlpha(t.points, big ? 0.28 : 0.8),
          pointBorderColor: t.highContrast && !big ? t.foreground : withAlpha(t.points, big ? 0.28 : 0.9),
          pointBorderWidth: t.highContrast && !big ? 1.5 : big ? 0 : 0.5,
          pointStyle: 'circle',
        });
        kinds.push({ kind: 'points' });
        legend.unshift(h('span', { class: 'cw-legend-item' }, boxSwatch(withAlpha(t.points, 0.8), t.highContrast ? t.foreground : undefined, true),
          shown < total ? ` data (${fmtInt(shown)} of ${fmtInt(total)} drawn)` : ` data (${fmtInt(total)})`));
        if (logX || logY) {
          let hidden = 0;
          for (let i = 0; i < total; i++) if ((logX && !(px[i]! > 0)) || (logY && !(py[i]! > 0))) hidden++;
          if (hidden) notes.push(`${fmtInt(hidden)} point${hidden > 1 ? 's' : ''} with values \u2264 0 not shown on the log axis.`);
        }
      }
    } else if (r.models.some(m => m.pointsOmitted)) {
      notes.push('Data points are not stored in this results file (too many rows); only the fitted curves are drawn.');
    }
    setChildren(el.legend, legend);

    // axis titles: the column or expression the spec bound (older reports without labels fall back to the names)
    const labels = r.data.labels;
    const yName = labels?.y ?? 'y';
    const xLabel = multi ? `fitted ${yName} (${sel?.name ?? ''})` : labels?.x[xVar] && labels.x[xVar] !== xVar ? `${labels.x[xVar]}` : xVar;
    const yLabel = yName;
    const main = this.chartConfig(datasets, kinds, 'main', { logX, logY, xLabel, yLabel });
    this.mainKinds = kinds;
    this.mainChart = this.applyChart(this.mainChart, el.mainCanvas, main);

    // Residuals of the selected model.
    const rd: ChartDataset<'scatter', Pt[]>[] = [];
    const rk: Kind[] = [];
    const sp = sel?.points;
    const standardized = this.st.residual === 'standardized';
    el.residKind.setAttribute('aria-pressed', String(standardized));
    if (sp) {
      const rx = multi ? sp.fitted : sp.x[xVar] ?? sp.fitted;
      const ry = standardized ? sp.standardized : sp.residual;
      const keep = decimateScatter(rx, ry, { columns: width, rows: 140, logX });
      const data: Pt[] = new Array(keep.length);
      let lo = Infinity, hi = -Infinity;
      for (let k = 0; k < keep.length; k++) {
        const i = keep[k]!;
        data[k] = { x: rx[i]!, y: ry[i]!, i };
        if (rx[i]! < lo) lo = rx[i]!;
        if (rx[i]! > hi) hi = rx[i]!;
      }
      if (band && band.x.length) { lo = Math.min(lo, band.x[0]!); hi = Math.max(hi, band.x[band.x.length - 1]!); }
      if (logX && lo <= 0) lo = hi / 10;
      if (lo <= hi && Number.isFinite(lo) && Number.isFinite(hi)) {
        rd.push({ label: 'zero', data: [{ x: lo, y: 0, i: -1 }, { x: hi, y: 0, i: -1 }], showLine: true, pointRadius: 0, pointHoverRadius: 0, borderColor: t.muted, borderWidth: t.highContrast ? 2 : 1, borderDash: [4, 3], order: 20 });
        rk.push({ kind: 'ref' });
      }
      const color = this.modelColor(r, sel!.name);
      const big = data.length > 2000;
      rd.push({ label: 'residual', data, showLine: false, order: 0, pointRadius: big ? 1.2 : 2.6, pointHoverRadius: big ? 4 : 5, pointHitRadius: big ? 3 : 5,
        pointBackgroundColor: t.highContrast && !big ? t.background : withAlpha(color, big ? 0.3 : 0.85),
        pointBorderColor: t.highContrast && !big ? t.foreground : big ? withAlpha(color, 0.3) : color,
        pointBorderWidth: t.highContrast && !big ? 1.5 : big ? 0 : 0.5, pointStyle: t.highContrast && !big ? 'rectRot' : 'circle' });
      rk.push({ kind: 'points', model: sel!.name });
      el.residBox.hidden = false;
    } else {
      el.residBox.hidden = true;
    }
    if (this.residHead) this.residHead.hidden = !sp;
    const residConf = this.chartConfig(rd, rk, 'resid', { logX, logY: false, xLabel, yLabel: standardized ? 'standardized residual' : 'residual' });
    this.residKinds = rk;
    this.residChart = this.applyChart(this.residChart, el.residCanvas, residConf);
    el.plotNote.replaceChildren(...notes.map(n => h('p', null, n)));
  }

  private chartConfig(datasets: ChartDataset<'scatter', Pt[]>[], kinds: Kind[], which: 'main' | 'resid',
    ax: { logX: boolean; logY: boolean; xLabel: string; yLabel: string }): ChartConfiguration<'scatter', Pt[]> {
    const t = this.theme;
    const view = this;
    const gridColor = t.grid;
    // Log axes: full grid lines at labelled (1-2-5) ticks, faint ones between.
    const faint = withAlpha(gridColor, 0.35);
    const minorGrid = (c: { tick?: { label?: unknown } }) => (c.tick && c.tick.label ? gridColor : faint);
    const tick = (v: number | string) => (typeof v === 'number' ? fmtNum(v, 3) : v);
    const logTick = (v: number | string) => {
      if (typeof v !== 'number' || v <= 0) return '';
      const m = v / Math.pow(10, Math.floor(Math.log10(v) + 1e-9));
      return Math.abs(m - 1) < 1e-6 || Math.abs(m - 2) < 1e-6 || Math.abs(m - 5) < 1e-6 ? fmtNum(v, 2) : '';
    };
    const fixWidth = (s: Scale) => { s.width = 68; };
    const background: Plugin<'scatter'> = {
      id: 'cwBackground',
      beforeDraw(chart) {
        const ctx = chart.ctx;
        ctx.save();
        ctx.globalCompositeOperation = 'destination-over';
        ctx.fillStyle = view.theme.background;
        ctx.fillRect(0, 0, chart.width, chart.height);
        ctx.restore();
      },
    };
    return {
      type: 'scatter',
      data: { datasets },
      plugins: [background],
      options: {
        animation: false,
        parsing: false,
        normalized: true,
        responsive: true,
        maintainAspectRatio: false,
        events: ['mousemove', 'mouseout', 'click', 'touchstart', 'touchmove'],
        interaction: { mode: 'nearest', intersect: true },
        layout: { padding: { top: 6, right: 12, bottom: 0, left: 0 } },
        onClick: (_e, elements) => {
          const ks = which === 'main' ? view.mainKinds : view.residKinds;
          for (const e of elements) {
            if (ks[e.datasetIndex]?.kind !== 'points') continue;
            const row = view.rowOf(e.datasetIndex, e.index, which);
            if (row !== undefined) view.opts.onRevealRow?.(row);
            return;
          }
        },
        scales: {
          x: {
            type: ax.logX ? 'logarithmic' : 'linear',
            title: { display: true, text: ax.xLabel, color: t.muted },
            grid: { color: ax.logX ? minorGrid : gridColor, lineWidth: t.highContrast ? 1 : 0.8 },
            border: { color: t.border },
            // On a log axis we label only 1-2-5 steps ourselves, so Chart.js must not skip ticks on top of that.
            ticks: { color: t.foreground, callback: ax.logX ? logTick : tick, maxRotation: 0, autoSkip: !ax.logX, autoSkipPadding: 12 },
          },
          y: {
            type: ax.logY ? 'logarithmic' : 'linear',
            title: { display: true, text: ax.yLabel, color: t.muted },
            grid: { color: ax.logY ? minorGrid : gridColor, lineWidth: t.highContrast ? 1 : 0.8 },
            border: { color: t.border },
            ticks: { color: t.foreground, callback: ax.logY ? logTick : tick, autoSkip: !ax.logY },
            afterFit: fixWidth,
          },
        },
        plugins: {
          tooltip: {
            enabled: false,
            filter: (item: TooltipItem<'scatter'>) => kinds[item.datasetIndex]?.kind === 'points',
            external: ctx => view.drawTooltip(ctx.chart.canvas.parentElement, ctx.tooltip, which),
          },
        },
      },
    };
  }

  private applyChart(chart: Chart<'scatter', Pt[]> | null, canvas: HTMLCanvasElement, cfg: ChartConfiguration<'scatter', Pt[]>): Chart<'scatter', Pt[]> {
    if (!chart) return new Chart(canvas, cfg);
    chart.data.datasets = cfg.data.datasets;
    chart.options = cfg.options!;
    chart.update('none');
    return chart;
  }

  /** Our own HTML tooltip (readable in every theme, selectable text): the point's row and values. */
  private drawTooltip(box: HTMLElement | null, tip: TooltipModel<'scatter'>, which: 'main' | 'resid'): void {
    if (!box) return;
    let el = box.querySelector<HTMLElement>(':scope > .cw-tooltip');
    if (!el) {
      el = h('div', { class: 'cw-tooltip', role: 'tooltip' });
      box.append(el);
    }
    const it = tip.dataPoints?.[0];
    if (tip.opacity === 0 || !it) { el.hidden = true; return; }
    const row = this.rowOf(it.datasetIndex, it.dataIndex, which);
    const lines = this.pointLines(it.raw as Pt);
    setChildren(el, row !== undefined ? h('div', { class: 'cw-tooltip-title' }, `row ${row}`) : null, lines.map(l => h('div', null, l)));
    el.hidden = false;
    // Place it beside the point, flipped to stay inside the plot (CSSOM styles are allowed by the CSP).
    const w = el.offsetWidth, hgt = el.offsetHeight;
    const left = tip.caretX + 12 + w > box.clientWidth ? tip.caretX - 12 - w : tip.caretX + 12;
    const top = Math.max(0, Math.min(box.clientHeight - hgt, tip.caretY - hgt / 2));
    el.style.left = `${Math.max(0, left)}px`;
    el.style.top = `${top}px`;
  }

  /** Page coordinates (CSS pixels, relative to the canvas) and rows of the drawn data points; used by tests. */
  pointPositions(which: 'main' | 'resid' = 'main'): { x: number; y: number; row: number | undefined }[] {
    const chart = which === 'main' ? this.mainChart : this.residChart;
    const kinds = which === 'main' ? this.mainKinds : this.residKinds;
    const di = kinds.findIndex(k => k.kind === 'points');
    if (!chart || di < 0) return [];
    return chart.getDatasetMeta(di).data.map((e, k) => ({ x: e.x, y: e.y, row: this.rowOf(di, k, which) }));
  }

  private rowOf(datasetIndex: number, index: number, which: 'main' | 'resid'): number | undefined {
    const chart = which === 'main' ? this.mainChart : this.residChart;
    const pt = chart?.data.datasets[datasetIndex]?.data[index] as Pt | undefined;
    const r = this.result;
    if (!pt || pt.i < 0 || !r || isError(r)) return undefined;
    const sel = this.selectedModel(r);
    const pts = sel?.points ?? r.models.find(m => m.points)?.points;
    return pts?.row[pt.i];
  }

  private pointLines(pt: Pt): string[] {
    const r = this.result;
    if (!r || isError(r) || pt.i < 0) return [];
    const sel = this.selectedModel(r);
    const pts = sel?.points ?? r.models.find(m => m.points)?.points;
    if (!pts) return [];
    const i = pt.i;
    const lines: string[] = [];
    for (const [name, arr] of Object.entries(pts.x)) lines.push(`${name} = ${fmtNum(arr[i], 6)}`);
    lines.push(`y = ${fmtNum(pts.y[i], 6)}`);
    if (sel?.points) {
      lines.push(`fitted (${sel.name}) = ${fmtNum(sel.points.fitted[i], 6)}`);
      lines.push(`residual = ${fmtNum(sel.points.residual[i], 4)}  (standardized ${fmtNum(sel.points.standardized[i], 3)})`);
      if (sel.points.cooks[i] !== undefined) lines.push(`leverage ${fmtNum(sel.points.leverage[i], 3)}, Cook's D ${fmtNum(sel.points.cooks[i], 3)}`);
      if (sel.points.weight) lines.push(`weight = ${fmtNum(sel.points.weight[i], 4)}`);
    }
    return lines;
  }

  // ---------------------------------------------------------------- tables

  private drawBody(r: FitReport, sel: ModelReport | undefined): void {
    const parts: Child[] = [];
    if (r.models.length > 1 || r.comparison) parts.push(this.comparisonCard(r, sel));
    parts.push(h('div', { class: 'cw-models' }, r.models.map((m, i) => this.modelCard(r, m, i, m.name === sel?.name))));
    if (r.expect.length) parts.push(this.expectCard(r));
    parts.push(this.dataCard(r));
    parts.push(h('footer', { class: 'cw-foot' }, `${r.meta.engine} \u00b7 spec ${r.meta.specHash.slice(0, 15)} \u00b7 data ${r.meta.dataHash.slice(0, 15)} \u00b7 seed ${r.meta.seed}`));
    const nodes: Node[] = [];
    const add = (c: Child) => { if (c instanceof Node) nodes.push(c); };
    parts.forEach(add);
    this.el.body.replaceChildren(...nodes);
  }

  private comparisonCard(r: FitReport, sel: ModelReport | undefined): HTMLElement {
    const c = r.comparison;
    const byName = new Map(r.models.map(m => [m.name, m] as const));
    const ranking = c?.ranking.length ? c.ranking : r.models.map(m => ({ name: m.name, aicc: m.stats.aicc, deltaAicc: null, weight: null, cvRmse: m.stats.cvRmse }));
    const rows = ranking.map((row, k) => {
      const m = byName.get(row.name);
      const free = m ? m.paramOrder.filter(p => !m.params[p]?.fixed).length : null;
      const best = r.best === row.name;
      const w = row.weight;
      const weightCell = w === null ? MISSING : h('span', { class: 'cw-weight' },
        h('span', { class: 'cw-bar' }, h('meter', { min: 0, max: 1, value: Math.max(0, Math.min(1, w)), class: 'cw-meter' })), ' ', fmtPct(w));
      const tr = h('tr', { class: `${best ? 'cw-best ' : ''}${row.name === sel?.name ? 'cw-selected' : ''}`, 'data-model': row.name, title: 'Show this model in the plot' },
        h('td', { class: 'num' }, String(k + 1)),
        h('td', null, lineSwatch(this.modelColor(r, row.name), dashFor(this.modelIndex(r, row.name)), this.theme.lineWidth), ' ', h('span', { class: 'cw-model-name' }, row.name),
          best ? h('span', { class: 'cw-badge cw-badge-best' }, '\u2605 best') : null,
          m?.status === 'failed' ? h('span', { class: 'cw-badge cw-badge-bad' }, 'failed') : null),
        h('td', { class: 'num' }, free === null ? MISSING : String(free)),
        h('td', { class: 'num' }, fmtNum(row.aicc, 5)),
        h('td', { class: 'num' }, fmtNum(row.deltaAicc, 3)),
        h('td', { class: 'num' }, weightCell),
        h('td', { class: 'num' }, fmtNum(row.cvRmse, 4)),
        h('td', { class: 'num' }, fmtR2(m?.stats.r2)),
      );
      tr.tabIndex = 0;
      tr.addEventListener('click', () => this.setState({ selected: row.name }));
      tr.addEventListener('keydown', ev => {
        if (ev.key === 'Enter' || ev.key === ' ') { ev.preventDefault(); this.setState({ selected: row.name }); }
      });
      return tr;
    });
    const parts: Child[] = [
      h('h2', { class: 'cw-h2' }, 'Model comparison'),
      h('div', { class: 'cw-table-wrap' }, h('table', { class: 'cw-table cw-compare' },
        h('thead', null, h('tr', null, th('#'), th('model', 'l'), th('k', undefined, 'free parameters'), th('AICc', undefined, 'corrected Akaike information criterion (lower is better)'),
          th('\u0394AICc', undefined, 'difference to the lowest AICc'), th('Akaike weight'), th('CV RMSE', undefined, 'cross-validated root mean square error'), th('R\u00b2'))),
        h('tbody', null, rows))),
    ];
    if (c?.reason) parts.push(h('p', { class: 'cw-reason' }, c.reason));
    if (c?.fTests.length) {
      parts.push(h('h3', { class: 'cw-h3' }, 'Nested models: extra-sum-of-squares F-tests'),
        h('div', { class: 'cw-table-wrap' }, h('table', { class: 'cw-table' },
          h('thead', null, h('tr', null, th('simpler', 'l'), th('richer', 'l'), th('F'), th('df\u2081'), th('df\u2082'), th('p'))),
          h('tbody', null, c.fTests.map(f => h('tr', null, h('td', null, f.simpler), h('td', null, f.richer),
            h('td', { class: 'num' }, fmtNum(f.F, 4)), h('td', { class: 'num' }, String(f.df1)), h('td', { class: 'num' }, String(f.df2)), h('td', { class: 'num' }, fmtP(f.p))))))));
    }
    return h('section', { class: 'cw-card cw-comparison' }, parts);
  }

  private modelCard(r: FitReport, m: ModelReport, i: number, selected: boolean): HTMLElement {
    const open = this.openModels.has(m.name) || (!this.closedModels.has(m.name) && (selected || r.models.length === 1));
    const conf = `${fmtNum(r.confidence * 100, 3)}\u2009%`;
    const summary = h('summary', { class: 'cw-model-sum' },
      lineSwatch(this.modelColor(r, m.name), dashFor(i), this.theme.lineWidth), ' ',
      h('span', { class: 'cw-model-name' }, m.name),
      r.best === m.name ? h('span', { class: 'cw-badge cw-badge-best' }, '\u2605 best') : null,
      m.status === 'failed' ? h('span', { class: 'cw-badge cw-badge-bad' }, 'failed') : null,
      h('span', { class: 'cw-kind' }, m.kind === 'polynomial' ? 'polynomial' : m.kind === 'builtin' ? 'built-in' : 'formula'),
      h('code', { class: 'cw-formula' }, m.formula),
    );
    const s = m.stats;
    const paramRows = m.paramOrder.map(name => {
      const p = m.params[name];
      if (!p) return null;
      const rel = typeof p.se === 'number' && typeof p.value === 'number' && p.value !== 0 ? p.se / Math.abs(p.value) : null;
      const notes: Child[] = [];
      if (p.fixed) notes.push(h('span', { class: 'cw-badge' }, 'fixed'));
      if (p.atBound) notes.push(h('span', { class: 'cw-badge cw-badge-warn' }, p.atBound === 'min' ? 'at lower bound' : 'at upper bound'));
      const f = (v: number | null) => fmtEstimate(v, p.se);
      return h('tr', { class: p.fixed ? 'cw-fixed' : null },
        h('td', null, h('code', null, name)),
        h('td', { class: 'num cw-strong' }, f(p.value)),
        h('td', { class: 'num' }, fmtNum(p.se, 3)),
        h('td', { class: 'num' }, fmtPct(rel)),
        h('td', { class: 'num' }, p.fixed ? MISSING : fmtInterval(p.ci, f)),
        h('td', { class: 'num' }, p.fixed ? MISSING : fmtInterval(p.profileCi, f)),
        h('td', { class: 'num' }, fmtP(p.p)),
        h('td', null, notes));
    });
    const paramTable = h('div', { class: 'cw-table-wrap' }, h('table', { class: 'cw-table cw-params' },
      h('thead', null, h('tr', null, th('parameter', 'l'), th('estimate'), th('SE', undefined, 'standard error'), th('rel. SE', undefined, 'standard error relative to the estimate'),
        th(`${conf} CI (Wald)`), th(`${conf} CI (profile)`, undefined, 'profile-likelihood interval; \u2014 marks a bound that does not exist'), th('p', undefined, 'two-sided p-value of t = estimate/SE'), th('', 'l'))),
      h('tbody', null, paramRows)));

    const stat = (label: string, value: string, title?: string) => [h('dt', title ? { title } : null, label), h('dd', null, value)];
    const statsList = h('dl', { class: 'cw-stats' },
      stat(s.r2Uncentred ? 'R\u00b2 (uncentred)' : 'R\u00b2', fmtR2(s.r2)),
      stat('adjusted R\u00b2', fmtR2(s.adjR2)),
      stat('\u03c3 (residual SE)', fmtNum(s.sigma, 4), 'sqrt(SSE / dof)'),
      stat('RMSE', fmtNum(s.rmse, 4), 'sqrt(SSE / n)'),
      stat('SSE', fmtNum(s.sse, 5)),
      stat('n', fmtInt(s.n)),
      stat('dof', fmtInt(s.dof)),
      s.chi2 !== null ? stat('\u03c7\u00b2', fmtNum(s.chi2, 5)) : null,
      s.reducedChi2 !== null ? stat('reduced \u03c7\u00b2', fmtNum(s.reducedChi2, 4)) : null,
      s.chi2P !== undefined && s.chi2P !== null ? stat('\u03c7\u00b2 p', fmtP(s.chi2P)) : null,
      stat('log-likelihood', fmtNum(s.logLik, 6)),
      stat('AIC', fmtNum(s.aic, 6)),
      stat('AICc', fmtNum(s.aicc, 6)),
      stat('BIC', fmtNum(s.bic, 6)),
      stat(s.cvFolds ? `CV RMSE (${s.cvFolds}-fold)` : 'CV RMSE', fmtNum(s.cvRmse, 4)),
    );
    const solver = h('p', { class: 'cw-solver' },
      m.status === 'converged' ? h('span', { class: 'cw-ok-text' }, '\u2714 converged') : h('span', { class: 'cw-bad-text' }, '\u2716 failed'),
      ` \u00b7 ${m.termination.replace(/-/g, ' ')} \u00b7 ${m.iterations} iteration${m.iterations === 1 ? '' : 's'}`,
      m.linear ? ' \u00b7 linear in its parameters' : '',
      m.start ? ` \u00b7 start: ${m.start.source}` : '');

    const wide: Child[] = [h('h3', { class: 'cw-h3' }, 'Parameters'), paramTable];
    const rt = m.residualTests;
    if (rt) {
      const rows: Child[] = [];
      if (rt.runs) rows.push(h('tr', null, h('td', null, 'runs test'), h('td', { class: 'num' }, `${rt.runs.runs} runs (expected ${fmtNum(rt.runs.expected, 3)})`), h('td', { class: 'num' }, `z = ${fmtNum(rt.runs.z, 3)}`), h('td', { class: 'num' }, fmtP(rt.runs.p))));
      if (rt.normality) rows.push(h('tr', null, h('td', null, rt.normality.test === 'shapiro-wilk' ? 'Shapiro\u2013Wilk' : 'D\u2019Agostino\u2013Pearson K\u00b2'),
        h('td', { class: 'num' }, `${rt.normality.test === 'shapiro-wilk' ? 'W' : 'K\u00b2'} = ${fmtNum(rt.normality.statistic, 4)}`), h('td', null, ''), h('td', { class: 'num' }, fmtP(rt.normality.p))));
      if (rt.durbinWatson !== null) rows.push(h('tr', null, h('td', null, 'Durbin\u2013Watson'), h('td', { class: 'num' }, `d = ${fmtNum(rt.durbinWatson, 3)}`), h('td', null, ''), h('td', { class: 'num' }, MISSING)));
      if (rows.length) wide.push(h('h3', { class: 'cw-h3' }, 'Residual tests'), h('div', { class: 'cw-table-wrap' }, h('table', { class: 'cw-table cw-tests' },
        h('thead', null, h('tr', null, th('test', 'l'), th('statistic'), th(''), th('p'))), h('tbody', null, rows))));
    }
    const sections: Child[] = [solver, h('div', { class: 'cw-grid' },
      h('div', { class: 'cw-col-wide' }, wide),
      h('div', { class: 'cw-col' }, h('h3', { class: 'cw-h3' }, 'Fit statistics'), statsList))];
    if (m.predictions.length) {
      sections.push(h('h3', { class: 'cw-h3' }, 'Predictions'), h('div', { class: 'cw-table-wrap' }, h('table', { class: 'cw-table cw-predictions' },
        h('thead', null, h('tr', null, th('x'), th('\u0177'), th(`${conf} CI of the mean`), th(`${conf} prediction interval`), th('', 'l'))),
        h('tbody', null, m.predictions.map(p => h('tr', null,
          h('td', { class: 'num' }, typeof p.x === 'number' ? fmtNum(p.x, 6) : Object.entries(p.x).map(([k, v]) => `${k} = ${fmtNum(v, 6)}`).join(', ')),
          h('td', { class: 'num cw-strong' }, fmtNum(p.y, 5)),
          h('td', { class: 'num' }, fmtInterval(p.ci, v => fmtNum(v, 5))),
          h('td', { class: 'num' }, fmtInterval(p.pi, v => fmtNum(v, 5))),
          h('td', null, p.extrapolated ? extrapolatedBadge() : null)))))));
      // the weight of the new observation in the prediction intervals (weighted fits, or spec predictWeight)
      const weighted = m.predictions.filter(p => p.weight);
      if (weighted.length) {
        const fromSpec = weighted[0].weight!.from === 'spec';
        sections.push(h('p', { class: 'cw-muted cw-note' }, fromSpec
          ? `Prediction intervals use the weight ${fmtNum(weighted[0].weight!.value, 4)} for a new observation (predictWeight in the spec).`
          : `Prediction intervals use, for a new observation, the weight of the observation nearest in x (${weighted.map(p => fmtNum(p.weight!.value, 4)).join(', ')}); set predictWeight in the spec to give it explicitly.`));
      }
    }
    if (m.inverse.length) {
      const rows: Child[] = [];
      for (const inv of m.inverse) {
        if (inv.roots.length === 0) {
          rows.push(h('tr', null, h('td', { class: 'num' }, fmtNum(inv.y, 6)), h('td', { class: 'cw-muted', colspan: 2 }, 'no x gives this y'), h('td', null, inv.extrapolated ? extrapolatedBadge() : null)));
          continue;
        }
        inv.roots.forEach((root, k) => rows.push(h('tr', null,
          h('td', { class: 'num' }, k === 0 ? fmtNum(inv.y, 6) : ''),
          h('td', { class: 'num cw-strong' }, fmtNum(root.x, 5)),
          h('td', { class: 'num' }, fmtInterval(root.interval, v => fmtNum(v, 5))),
          h('td', null, inv.extrapolated ? extrapolatedBadge() : null))));
      }
      sections.push(h('h3', { class: 'cw-h3' }, 'Inverse predictions (x for a given y)'), h('div', { class: 'cw-table-wrap' }, h('table', { class: 'cw-table cw-inverse' },
        h('thead', null, h('tr', null, th('y'), th('x'), th(`${conf} interval`), th('', 'l'))), h('tbody', null, rows))));
    }
    if (m.correlation && m.paramOrder.length > 1) {
      sections.push(h('details', { class: 'cw-sub-details' }, h('summary', null, 'Parameter correlation'), this.correlationTable(m)));
    }
    const details = h('details', { class: `cw-card cw-model${selected ? ' cw-model-selected' : ''}`, 'data-model': m.name, open }, summary, h('div', { class: 'cw-model-body' }, sections));
    return details;
  }

  private correlationTable(m: ModelReport): HTMLElement {
    const c = m.correlation!;
    return h('div', { class: 'cw-table-wrap' }, h('table', { class: 'cw-table cw-corr' },
      h('thead', null, h('tr', null, th('', 'l'), m.paramOrder.map(p => th(p)))),
      h('tbody', null, m.paramOrder.map((p, i) => h('tr', null, h('td', null, h('code', null, p)),
        m.paramOrder.map((_q, j) => {
          const v = c[i]?.[j] ?? null;
          const strong = v !== null && i !== j && Math.abs(v) >= 0.95;
          return h('td', { class: `num${strong ? ' cw-strong cw-warn-text' : ''}` }, i === j ? '1' : fmtNum(v, 3));
        }))))));
  }

  private expectCard(r: FitReport): HTMLElement {
    return h('section', { class: 'cw-card' }, h('h2', { class: 'cw-h2' }, 'Expectations'),
      h('div', { class: 'cw-table-wrap' }, h('table', { class: 'cw-table' },
        h('thead', null, h('tr', null, th('model', 'l'), th('parameter', 'l'), th('expected'), th('tolerance'), th('actual'), th('', 'l'))),
        h('tbody', null, r.expect.map(e => h('tr', null, h('td', null, e.model), h('td', null, h('code', null, e.param)),
          h('td', { class: 'num' }, fmtNum(e.value, 6)),
          h('td', { class: 'num' }, e.tol !== undefined ? `\u00b1${fmtNum(e.tol, 3)}` : e.rel !== undefined ? `\u00b1${fmtPct(e.rel)}` : MISSING),
          h('td', { class: 'num' }, fmtNum(e.actual, 6)),
          h('td', null, e.ok ? h('span', { class: 'cw-ok-text' }, '\u2714 met') : h('span', { class: 'cw-bad-text' }, '\u2716 not met'))))))));
  }

  private dataCard(r: FitReport): HTMLElement {
    const d = r.data;
    const rangeX = Array.isArray(d.range.x) ? [['x', d.range.x] as const] : Object.entries(d.range.x);
    const stat = (label: string, value: Child) => [h('dt', null, label), h('dd', null, value)];
    const list = h('dl', { class: 'cw-stats cw-data-stats' },
      stat('file', h('code', null, d.file)),
      stat('rows read', fmtInt(d.rows)),
      stat('rows used', fmtInt(d.used)),
      d.filtered ? stat('left out by where', fmtInt(d.filtered)) : null,
      stat('dropped (bad cells)', fmtInt(d.dropped.length)),
      stat('excluded on purpose', fmtInt(d.excluded.length)),
      rangeX.map(([k, v]) => stat(`range of ${k}`, fmtInterval(v, x => fmtNum(x, 5)))),
      stat('range of y', fmtInterval(d.range.y, x => fmtNum(x, 5))),
      Object.entries(d.correlation).map(([k, v]) => stat(`Pearson r (y, ${k})`, fmtNum(v, 4))),
    );
    const parts: Child[] = [h('h2', { class: 'cw-h2' }, 'Data'), list];
    const LIMIT = 50;
    if (d.dropped.length) {
      parts.push(h('h3', { class: 'cw-h3' }, 'Dropped rows'), h('div', { class: 'cw-table-wrap' }, h('table', { class: 'cw-table' },
        h('thead', null, h('tr', null, th('row'), th('line'), th('column', 'l'), th('reason', 'l'))),
        h('tbody', null, d.dropped.slice(0, LIMIT).map(x => h('tr', null, h('td', { class: 'num' }, this.rowLink(x.row)), h('td', { class: 'num' }, String(x.line)), h('td', null, x.column), h('td', null, x.reason)))))));
      if (d.dropped.length > LIMIT) parts.push(h('p', { class: 'cw-muted' }, `\u2026 and ${fmtInt(d.dropped.length - LIMIT)} more`));
    }
    if (d.excluded.length) {
      parts.push(h('h3', { class: 'cw-h3' }, 'Excluded rows'), h('div', { class: 'cw-table-wrap' }, h('table', { class: 'cw-table' },
        h('thead', null, h('tr', null, th('row'), th('reason', 'l'))),
        h('tbody', null, d.excluded.slice(0, LIMIT).map(x => h('tr', null, h('td', { class: 'num' }, this.rowLink(x.row)), h('td', null, x.reason)))))));
      if (d.excluded.length > LIMIT) parts.push(h('p', { class: 'cw-muted' }, `\u2026 and ${fmtInt(d.excluded.length - LIMIT)} more`));
    }
    return h('section', { class: 'cw-card cw-data' }, parts);
  }

  private rowLink(row: number): Child {
    const revealRow = this.opts.onRevealRow;
    return revealRow ? h('button', { class: 'cw-link', type: 'button', title: 'Open the data file at this row', onclick: () => revealRow(row) }, String(row)) : String(row);
  }
}

function th(text: string, align?: 'l', title?: string): HTMLTableCellElement {
  return h('th', { class: align === 'l' ? 'l' : 'num', scope: 'col', title }, text);
}

function extrapolatedBadge(): HTMLElement {
  return h('span', { class: 'cw-badge cw-badge-warn', title: 'outside the range of the data: the model is extrapolated' }, '\u26a0 extrapolated');
}
