// Draws one RunResult (FitReport or ErrorReport) into an element. It only reads the report — no statistic is
// recomputed here and the solver is never imported. A second call on the same element updates in place (charts via
// chart.update('none')), so a refit does not make the panel flash. This file lays the parts out and keeps the view's
// state; the parts live in charts.ts (every Chart.js call), tables.ts, problems.ts, exports.ts and state.ts.
import type { ErrorReport, FitReport, ModelReport, RunResult } from '../src/engine/report';
import { fmtNum } from '../src/shared/numberFormat';
import { ChartsView } from './charts';
import { h, lineSwatch, setChildren, type Child } from './dom';
import { parametersCsv, plotPng, renderFigure, reportJson, type FigureOptions } from './exports';
import { ProblemsView, SEVERITY_ICON, SEVERITY_WORD, errorBox, groupProblems, severityCounts, type ProblemGroup } from './problems';
import { baseName, isError, selectedModelOf, type RenderOptions, type ViewContext, type ViewState } from './state';
import { readoutsCard } from './readouts';
import { reportBody } from './tables';
import { dashFor, type ThemeColors } from './theme';

export type { ExportPayload, RenderOptions, ViewState } from './state';
export { formatPath } from './problems';
export { parametersCsv, reportJson } from './exports';

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

export class ReportView implements ViewContext {
  readonly root: HTMLElement;
  opts: RenderOptions;
  theme: ThemeColors;
  private result: RunResult | null = null;
  /** the last FitReport drawn: kept on screen, dimmed, while the spec is broken, until the next good one */
  private good: FitReport | null = null;
  private st: ViewState;
  private readonly charts: ChartsView;
  private readonly problems: ProblemsView;
  private openModels = new Set<string>();
  private figure: FigureOptions = { width: 1200, height: 800, scale: 2, background: 'white' };
  private closedModels = new Set<string>();

  private readonly el: {
    wrap: HTMLElement; head: HTMLElement; busy: HTMLElement; actions: HTMLElement; error: HTMLElement; problems: HTMLElement;
    plot: HTMLElement; chips: HTMLElement; body: HTMLElement; rest: HTMLElement; stale: HTMLElement;
  };

  constructor(root: HTMLElement, opts: RenderOptions) {
    this.root = root;
    this.opts = opts;
    this.theme = opts.theme;
    this.st = { selected: opts.selected, logX: opts.logX, logY: opts.logY, residual: opts.residual ?? 'raw' };
    this.charts = new ChartsView(this, () => this.st, patch => this.setState(patch));
    const el = {
      wrap: h('div', { class: 'cw-report' }),
      head: h('header', { class: 'cw-head' }),
      busy: h('span', { class: 'cw-busy', role: 'status', 'aria-live': 'polite' }),
      actions: h('div', { class: 'cw-actions' }),
      error: h('section', { class: 'cw-error', role: 'alert' }),
      problems: h('section', { class: 'cw-problems' }),
      plot: h('section', { class: 'cw-card cw-plot', 'aria-label': 'Plot of the data and the fitted curves' }),
      chips: h('div', { class: 'cw-chips', role: 'group', 'aria-label': 'Models: choose the one whose bands and residuals are drawn' }),
      body: h('div', { class: 'cw-body' }),
      rest: h('div', { class: 'cw-body cw-body-rest' }),
      stale: h('div', { class: 'cw-stale-part' }),
    };
    this.el = el;
    this.problems = new ProblemsView(this, el.problems);
    const c = this.charts.el;
    el.plot.append(h('div', { class: 'cw-plot-bar' }, el.chips, c.toggles), c.legend, c.mainBox, c.residHead, c.residBox, c.plotNote);
    // the live loop's order: header, the error of a broken spec, the plot, the tables, then the problems
    el.stale.append(el.plot, el.body, el.problems, el.rest);
    el.wrap.append(el.head, el.error, el.stale);
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

  /** The last good report (shown dimmed while the current one is an error). */
  lastGood(): FitReport | null {
    return this.good;
  }

  /** Start from a good report drawn before (e.g. persisted across a reload) without drawing it yet. */
  remember(good: FitReport): void {
    this.good = good;
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
    const c = this.charts.canvases();
    const r = this.result;
    if (!c) return null;
    if (!r || isError(r)) return c.main.toDataURL('image/png');
    return plotPng(this, r, c.main, c.resid);
  }

  /** Page coordinates (CSS pixels, relative to the canvas) and rows of the drawn data points; used by tests. */
  pointPositions(which: 'main' | 'resid' = 'main'): { x: number; y: number; row: number | undefined }[] {
    return this.charts.pointPositions(which);
  }

  /** The labelled ticks of a plot's axis as drawn (for tests). */
  axisLabels(which: 'main' | 'resid' = 'main', axis: 'x' | 'y' = 'x'): string[] {
    return this.charts.axisLabels(which, axis);
  }

  /** Remove the charts and the DOM. */
  destroy(): void {
    this.charts.destroy();
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

  selectedModel(r: FitReport): ModelReport | undefined {
    return selectedModelOf(r, this.st.selected);
  }

  modelIndex(r: FitReport, name: string): number {
    return Math.max(0, r.models.findIndex(m => m.name === name));
  }

  modelColor(r: FitReport, name: string): string {
    const s = this.theme.series;
    return s[this.modelIndex(r, name) % s.length] ?? this.theme.accent;
  }

  select(name: string): void {
    this.setState({ selected: name });
  }

  // ---------------------------------------------------------------- drawing

  private draw(): void {
    const cur = this.result;
    if (!cur) return;
    const el = this.el;
    el.wrap.classList.toggle('cw-hc', this.theme.highContrast);
    const broken: ErrorReport | null = isError(cur) ? cur : null;
    if (!broken) this.good = cur as FitReport;
    const r = broken ? this.good : (cur as FitReport);
    if (broken) {
      el.error.hidden = false;
      setChildren(el.error, errorBox(this, broken, !!r));
    } else {
      el.error.hidden = true;
      el.error.replaceChildren();
    }
    el.wrap.classList.toggle('cw-is-stale', !!(broken && r));
    // a dimmed result is not for reading off: out of the accessibility tree and the tab order, but still visible
    if (broken && r) el.stale.setAttribute('inert', ''); else el.stale.removeAttribute('inert');
    el.stale.setAttribute('aria-hidden', broken && r ? 'true' : 'false');
    if (!r) {
      this.drawHead(cur, []);
      el.stale.hidden = true;
      el.body.replaceChildren();
      el.rest.replaceChildren();
      return;
    }
    el.stale.hidden = false;
    const sel = this.selectedModel(r);
    if (sel && this.st.selected !== undefined && this.st.selected !== sel.name) this.st.selected = sel.name;
    const groups = groupProblems(r, sel?.name);
    this.drawHead(broken ?? r, groups, broken ? r : undefined);
    this.problems.draw(groups);
    el.plot.hidden = false;
    this.drawChips(r, sel);
    this.charts.draw(r, sel, this.st);
    this.drawBody(r, sel);
  }

  /** The header: title, status chips (counts per severity; each jumps to its problems), best model, spec, actions. */
  private drawHead(r: RunResult, groups: ProblemGroup[], shown?: FitReport): void {
    const fit = shown ?? (isError(r) ? undefined : r);
    const title = fit?.title ? fit.title : baseName(r.spec);
    const counts = severityCounts(groups);
    const status: Child[] = [];
    if (isError(r)) {
      status.push(h('button', { class: 'cw-status cw-status-error', type: 'button', title: 'Show the error', onclick: () => this.el.error.scrollIntoView({ block: 'nearest' }) },
        h('span', { 'aria-hidden': 'true' }, SEVERITY_ICON.error), ' spec error'));
    }
    if (!isError(r)) {
      for (const s of ['error', 'warning', 'info'] as const) {
        const n = counts[s].groups;
        if (!n) continue;
        const word = SEVERITY_WORD[s][n === 1 ? 0 : 1];
        status.push(h('button', {
          class: `cw-status cw-status-${s}`, type: 'button',
          title: `${n} ${word} (${counts[s].problems} problem${counts[s].problems === 1 ? '' : 's'}): show them`,
          onclick: () => this.problems.focus(s),
        }, h('span', { 'aria-hidden': 'true' }, SEVERITY_ICON[s]), ` ${n} ${word}`));
      }
      if (!groups.length) status.push(h('span', { class: 'cw-status cw-status-ok' }, h('span', { 'aria-hidden': 'true' }, '\u2714'), ' no problems'));
    }
    if (fit?.best) status.push(h('span', { class: 'cw-status cw-status-best' }, 'best: ', h('strong', null, fit.best)));
    const sub: Child[] = [h('code', { class: 'cw-spec-path' }, this.opts.specLabel ?? r.spec)];
    if (this.opts.note) sub.push(' ', h('span', { class: 'cw-badge cw-badge-warn' }, this.opts.note));
    if (fit) sub.push(' \u00b7 ', `${fmtNum(fit.confidence * 100, 3)}\u2009% intervals`);
    this.el.actions.replaceChildren();
    const onRefit = this.opts.onRefit;
    if (onRefit) this.el.actions.append(h('button', { class: 'cw-btn', type: 'button', title: 'Fit this spec again now', onclick: () => onRefit() }, 'Refit'));
    const onExport = this.opts.onExport;
    if (onExport) {
      const base = baseName(r.spec);
      if (fit && !isError(r)) {
        this.el.actions.append(
          this.figureMenu(fit, base, onExport),
          h('button', { class: 'cw-btn', type: 'button', title: 'Save the parameters of every model as CSV', onclick: () => {
            onExport({ format: 'csv', data: parametersCsv(fit), suggestedName: `${base}-parameters.csv` });
          } }, 'CSV'),
        );
      }
      this.el.actions.append(h('button', { class: 'cw-btn', type: 'button', title: 'Save the full report as JSON', onclick: () => {
        onExport({ format: 'json', data: reportJson(r), suggestedName: `${base}.fitresult.json` });
      } }, 'JSON'));
    }
    this.el.head.replaceChildren(
      h('div', { class: 'cw-head-text' },
        h('h1', { class: 'cw-title' }, title),
        h('div', { class: 'cw-status-row', role: 'group', 'aria-label': 'Status' }, status),
        h('div', { class: 'cw-sub' }, sub)),
      h('div', { class: 'cw-head-side' }, this.el.busy, this.el.actions),
    );
  }

  /** "Figure…": size, pixel ratio and background of a saved figure, then PNG or SVG. Remembered while the view lives. */
  private figureMenu(r: FitReport, base: string, onExport: NonNullable<RenderOptions['onExport']>): HTMLElement {
    const f = this.figure;
    const field = (label: string, input: HTMLElement) => h('label', { class: 'cw-field' }, h('span', null, label), input);
    const width = h('input', { type: 'number', min: 320, max: 6000, step: 10, value: f.width, 'aria-label': 'Figure width in pixels' });
    const height = h('input', { type: 'number', min: 240, max: 6000, step: 10, value: f.height, 'aria-label': 'Figure height in pixels' });
    const scale = h('select', { 'aria-label': 'Pixel ratio of the PNG' }, [1, 2, 3].map(s => h('option', { value: s, selected: s === f.scale }, `${s}\u00d7`)));
    const bg = h('select', { 'aria-label': 'Background of the figure' },
      (['white', 'transparent', 'theme'] as const).map(b => h('option', { value: b, selected: b === f.background }, b === 'theme' ? 'this theme' : b === 'white' ? 'white' : 'transparent')));
    const read = (): FigureOptions => {
      const n = (el: HTMLInputElement, lo: number, d: number) => { const v = Number(el.value); return Number.isFinite(v) && v >= lo ? Math.min(6000, v) : d; };
      this.figure = { width: n(width, 320, 1200), height: n(height, 240, 800), scale: Number(scale.value) || 2, background: bg.value as FigureOptions['background'] };
      return this.figure;
    };
    const save = (format: 'png' | 'svg') => {
      const fig = renderFigure(this, r, this.st, read());
      onExport({ format, data: format === 'png' ? fig.png : fig.svg, suggestedName: `${base}-plot.${format}`, model: this.st.selected });
    };
    return h('details', { class: 'cw-figure' },
      h('summary', { class: 'cw-btn', title: 'Save the plots as an image for a document' }, 'Figure\u2026'),
      h('div', { class: 'cw-figure-form', role: 'group', 'aria-label': 'Save the figure' },
        field('width', width), field('height', height), field('scale', scale), field('background', bg),
        h('button', { class: 'cw-btn', type: 'button', title: 'Save the figure as a PNG image', onclick: () => save('png') }, 'PNG'),
        h('button', { class: 'cw-btn', type: 'button', title: 'Save the figure as an SVG drawing (text stays text)', onclick: () => save('svg') }, 'SVG')));
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

  private drawBody(r: FitReport, sel: ModelReport | undefined): void {
    const isOpen = (m: ModelReport, selected: boolean) =>
      this.openModels.has(m.name) || (!this.closedModels.has(m.name) && (selected || r.models.length === 1));
    const { tables, rest } = reportBody(this, r, sel, isOpen);
    const readouts = this.opts.readouts ? readoutsCard(r) : null;
    this.el.body.replaceChildren(...tables, ...(readouts ? [readouts] : []));
    this.el.rest.replaceChildren(...rest);
  }
}
