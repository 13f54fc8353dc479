// Every Chart.js call of the panel: the data-and-curves plot and the residual plot, their axes (log axes labelled at
// 1-2-5 per decade), bands, decimation of large data, the HTML tooltip and the point-to-row mapping. Options are
// passed per chart; nothing writes the global Chart.defaults.
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
import type { FitReport, ModelReport, PointsReport } from '../src/engine/report';
import { fmtInt, fmtNum, fmtR2 } from '../src/shared/numberFormat';
import { decimateLine, decimateScatter } from './decimate';
import { boxSwatch, h, setChildren, type Child } from './dom';
import { pointsOf, type ViewContext, type ViewState } from './state';
import { dashFor, withAlpha, type ThemeColors } from './theme';

Chart.register(ScatterController, LineElement, PointElement, LinearScale, LogarithmicScale, Tooltip, Filler);

export type Pt = { x: number; y: number; i: number };
type Kind = { kind: 'points' | 'curve' | 'band' | 'ref'; model?: string };

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

/** "concentration" + "ng/mL" -> "concentration (ng/mL)" */
export function withUnit(label: string, unit: string | undefined): string {
  return unit ? `${label} (${unit})` : label;
}

/**
 * The axis scale when the user has not chosen: the spec's plot block, else a log axis when every value is positive
 * and they span more than two decades (largest / smallest > 100: dose–response, dilution series, decays; common
 * practice), else linear. `why` says which rule decided, for the toggle's tooltip.
 */
export function axisScale(spec: 'auto' | 'linear' | 'log' | undefined, a: ArrayLike<number> | undefined, b: ArrayLike<number> | undefined): { log: boolean; why: string } {
  if (spec === 'log') return { log: true, why: 'log in the spec' };
  if (spec === 'linear') return { log: false, why: 'linear in the spec' };
  let lo = Infinity, hi = -Infinity, n = 0;
  for (const arr of [a, b]) {
    if (!arr) continue;
    for (let i = 0; i < arr.length; i++) {
      const v = arr[i]!;
      if (!Number.isFinite(v)) continue;
      if (v <= 0) return { log: false, why: 'automatic: values at or below zero' };
      if (v < lo) lo = v;
      if (v > hi) hi = v;
      n++;
    }
  }
  if (n < 2) return { log: false, why: 'automatic' };
  const decades = Math.log10(hi / lo);
  return decades > 2 ? { log: true, why: `automatic: the values span ${fmtNum(decades, 2)} decades` } : { log: false, why: `automatic: the values span ${fmtNum(decades, 2)} decades` };
}

/** The elements the plots live in (built here, placed by the view). */
export interface ChartElements {
  /** the plot in words, for screen readers (visually hidden) */
  desc: HTMLElement;
  legend: HTMLElement; mainBox: HTMLElement; residBox: HTMLElement; residHead: HTMLElement;
  mainCanvas: HTMLCanvasElement; residCanvas: HTMLCanvasElement; plotNote: HTMLElement; toggles: HTMLElement;
  logX: HTMLButtonElement; logY: HTMLButtonElement; residKind: HTMLButtonElement;
}

/** The two plots of one view. `onState` receives the toggles' changes (log x, log y, residual kind). */
export class ChartsView {
  private static count = 0;
  readonly el: ChartElements;
  private mainChart: Chart<'scatter', Pt[]> | null = null;
  private residChart: Chart<'scatter', Pt[]> | null = null;
  private mainKinds: Kind[] = [];
  private residKinds: Kind[] = [];
  private r: FitReport | null = null;
  /** the log axes as drawn (the user's choice, the spec's, or automatic); the toggles flip these */
  private effective = { logX: false, logY: false };

  /** `render`: for a saved figure, the pixel ratio of the canvases and a transparent background (no fill). */
  constructor(private readonly ctx: ViewContext, st: () => ViewState, onState: (patch: Partial<ViewState>) => void,
    private readonly render: { devicePixelRatio?: number; transparent?: boolean } = {}) {
    const logX = h('button', { class: 'cw-toggle', type: 'button', 'aria-pressed': 'false', title: 'Logarithmic x axis' }, 'log x');
    const logY = h('button', { class: 'cw-toggle', type: 'button', 'aria-pressed': 'false', title: 'Logarithmic y axis' }, 'log y');
    const residKind = h('button', { class: 'cw-toggle', type: 'button', 'aria-pressed': 'false', title: 'Show standardized residuals' }, 'standardized');
    logX.addEventListener('click', () => onState({ logX: !this.effective.logX }));
    logY.addEventListener('click', () => onState({ logY: !this.effective.logY }));
    residKind.addEventListener('click', () => onState({ residual: st().residual === 'raw' ? 'standardized' : 'raw' }));
    const desc = h('p', { class: 'cw-sr', id: `cw-plot-desc-${++ChartsView.count}` });
    const mainCanvas = h('canvas', { class: 'cw-canvas', role: 'img', 'aria-label': 'Data and fitted curves', 'aria-describedby': desc.id });
    const residCanvas = h('canvas', { class: 'cw-canvas', role: 'img', 'aria-label': 'Residuals of the selected model' });
    this.el = {
      legend: h('div', { class: 'cw-legend' }),
      mainBox: h('div', { class: 'cw-chart cw-chart-main' }, mainCanvas, desc),
      desc,
      residBox: h('div', { class: 'cw-chart cw-chart-resid' }, residCanvas),
      residHead: h('div', { class: 'cw-resid-head' }, h('span', { class: 'cw-axis-title' }, 'Residuals'), residKind),
      mainCanvas, residCanvas,
      plotNote: h('div', { class: 'cw-note' }),
      toggles: h('div', { class: 'cw-toggles' }, logX, logY),
      logX, logY, residKind,
    };
  }

  /** The plot described in words (the canvas's aria-describedby): what is drawn, each model's R², the best. */
  private describe(r: FitReport, sel: ModelReport | undefined, a: { xLabel: string; yLabel: string; logX: boolean; logY: boolean; n: number; shown: number }): void {
    const fits = r.models.filter(m => m.status === 'converged');
    const parts = [
      `Plot of ${a.yLabel} against ${a.xLabel}${a.logX || a.logY ? ` (log ${a.logX && a.logY ? 'x and y axes' : a.logX ? 'x axis' : 'y axis'})` : ''}:`,
      a.n ? `${fmtInt(a.n)} data points${a.shown < a.n ? ` (${fmtInt(a.shown)} drawn)` : ''},` : 'no data points stored,',
      fits.length ? `${fits.length} fitted ${fits.length === 1 ? 'curve' : 'curves'}: ${fits.map(m => `${m.name} (R\u00b2 ${fmtR2(m.stats.r2)}, n ${fmtInt(m.stats.n)})`).join(', ')}.` : 'no model converged.',
      r.best ? `Best model: ${r.best}.` : '',
      sel ? `Bands and residuals are of ${sel.name}.` : '',
    ];
    const failed = r.models.length - fits.length;
    if (failed) parts.push(`${failed} ${failed === 1 ? 'model' : 'models'} did not converge.`);
    this.el.desc.textContent = parts.filter(Boolean).join(' ');
  }

  /** The canvases to compose an image from: the main plot, and the residual plot unless it is hidden. */
  canvases(): { main: HTMLCanvasElement; resid: HTMLCanvasElement | null } | null {
    if (!this.mainChart) return null;
    return { main: this.mainChart.canvas, resid: this.residChart && !this.el.residBox.hidden ? this.residChart.canvas : null };
  }

  destroy(): void {
    this.mainChart?.destroy();
    this.residChart?.destroy();
    this.mainChart = this.residChart = null;
  }

  /** Draw (or update in place) both plots for `r` with `sel` selected and the user's choices `st`. */
  draw(r: FitReport, sel: ModelReport | undefined, st: ViewState): void {
    this.r = r;
    const ctx = this.ctx;
    const t = ctx.theme;
    const el = this.el;

    const pts = pointsOf(r, sel);
    const xVars = pts ? Object.keys(pts.x) : sel?.band?.variable ? [sel.band.variable] : [];
    const multi = xVars.length > 1 && !sel?.band;
    const xVar = xVariable(sel, pts) ?? 'x';
    const xs: ArrayLike<number> | undefined = multi ? sel?.points?.fitted : pts?.x[xVar];

    // Log toggles are offered only when the data have positive values on that axis. Which scale: the user's toggle
    // (kept per spec in the panel state), else the spec's plot block, else automatic (axisScale).
    const canLogX = positiveAny(xs) || positiveAny(sel?.band?.x);
    const canLogY = positiveAny(pts?.y) || positiveAny(sel?.band?.fit);
    const autoX = multi ? axisScale(r.plot?.x?.scale, xs, undefined) : axisScale(r.plot?.x?.scale, xs, sel?.band?.x);
    const autoY = axisScale(r.plot?.y?.scale, pts?.y, undefined);
    const logX = (st.logX ?? autoX.log) && canLogX, logY = (st.logY ?? autoY.log) && canLogY;
    this.effective = { logX, logY };
    el.logX.disabled = !canLogX;
    el.logY.disabled = !canLogY;
    el.logX.setAttribute('aria-pressed', String(logX));
    el.logY.setAttribute('aria-pressed', String(logY));
    el.logX.title = canLogX ? `Logarithmic x axis${st.logX === undefined ? ` (${autoX.why})` : ''}` : 'No positive x values: a log axis is not possible';
    el.logY.title = canLogY ? `Logarithmic y axis${st.logY === undefined ? ` (${autoY.why})` : ''}` : 'No positive y values: a log axis is not possible';

    const width = Math.max(200, el.mainBox.clientWidth || 800);
    const height = Math.max(120, el.mainBox.clientHeight || 340);
    const datasets: ChartDataset<'scatter', Pt[]>[] = [];
    const kinds: Kind[] = [];
    const notes: string[] = [];
    const okX = (v: number) => Number.isFinite(v) && (!logX || v > 0);
    const yv = (v: number) => (Number.isFinite(v) && (!logY || v > 0) ? v : NaN);
    const band = !multi && sel?.status === 'converged' ? sel.band : null;
    const bands = r.plot?.bands ?? ['confidence', 'prediction'];
    const showPi = bands.includes('prediction'), showCi = bands.includes('confidence');
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

    if (band && band.x.length && (showPi || showCi)) {
      const bandLine = { showLine: true, pointRadius: 0, pointHoverRadius: 0, borderWidth: 0, tension: 0, order: 30 } as const;
      const base = ctx.modelColor(r, sel!.name);
      const piFill = withAlpha(base, t.piAlpha), ciFill = withAlpha(base, t.ciAlpha);
      const before = datasets.length;
      if (showPi) {
        datasets.push({ ...bandLine, label: 'prediction band', data: line(band.x, band.piHigh), fill: '+1', backgroundColor: piFill, borderColor: piFill });
        datasets.push({ ...bandLine, label: 'prediction band (low)', data: line(band.x, band.piLow, true), fill: false, borderColor: piFill });
        kinds.push({ kind: 'band' }, { kind: 'band' });
      }
      if (showCi) {
        datasets.push({ ...bandLine, label: 'confidence band', data: line(band.x, band.ciHigh), fill: '+1', backgroundColor: ciFill, borderColor: ciFill });
        datasets.push({ ...bandLine, label: 'confidence band (low)', data: line(band.x, band.ciLow, true), fill: false, borderColor: ciFill });
        kinds.push({ kind: 'band' }, { kind: 'band' });
      }
      if (t.highContrast) {
        // Outline the bands too, so they read without relying on fill opacity.
        for (const d of datasets.slice(before)) { d.borderWidth = 1; d.borderDash = [2, 3]; d.borderColor = t.foreground; }
      }
      if (showCi) legend.push(h('span', { class: 'cw-legend-item' }, boxSwatch(withAlpha(base, Math.min(1, t.ciAlpha + (showPi ? t.piAlpha : 0)))), ` ${conf} confidence band (${sel!.name})`));
      if (showPi) legend.push(h('span', { class: 'cw-legend-item' }, boxSwatch(piFill), ` ${conf} prediction band${showCi ? '' : ` (${sel!.name})`}`));
    }

    if (multi) {
      // Several x variables: observed against fitted, with the identity line.
      const f = sel?.points?.fitted, y = sel?.points?.y;
      if (f && y) {
        let lo = Infinity, hi = -Infinity;
        for (let i = 0; i < f.length; i++) for (const v of [f[i]!, y[i]!]) if (okX(v) && Number.isFinite(yv(v))) { if (v < lo) lo = v; if (v > hi) hi = v; }
        if (lo < hi) {
          datasets.push({ label: 'y = fitted', data: [{ x: lo, y: lo, i: -1 }, { x: hi, y: hi, i: -1 }], showLine: true, pointRadius: 0, borderColor: ctx.modelColor(r, sel!.name), borderWidth: t.lineWidth, borderDash: [6, 4], order: 20 });
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
          borderColor: ctx.modelColor(r, m.name), borderWidth: selected ? t.lineWidth * 1.6 : t.lineWidth,
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
    // calibration unknowns read off the curve: each sample's mean reading at its back-calculated x (one triangle per
    // sample; a sample with no x has no place on the curve and is listed in the Read-outs card only)
    const unk = multi ? [] : (r.unknowns?.results ?? []).filter(u => u.x !== null && okX(u.x) && Number.isFinite(u.meanY) && (!logY || u.meanY > 0));
    if (unk.length) {
      datasets.push({
        label: 'unknowns', data: unk.map(u => ({ x: u.x!, y: u.meanY, i: -1 })), showLine: false, order: -1,
        pointRadius: 5, pointHoverRadius: 7, pointStyle: 'triangle',
        pointBackgroundColor: t.highContrast ? t.background : withAlpha(t.warning, 0.85), pointBorderColor: t.foreground, pointBorderWidth: 1,
      });
      kinds.push({ kind: 'ref' });
      legend.push(h('span', { class: 'cw-legend-item' }, '\u25b2', ` unknowns (${fmtInt(unk.length)} read off ${r.unknowns!.model})`));
    }
    setChildren(el.legend, legend);

    // axis titles: the column or expression the spec bound (older reports without labels fall back to the names)
    // and the spec's plot block: its own titles and units
    const labels = r.data.labels;
    const px = r.plot?.x, py = r.plot?.y;
    const yName = py?.label ?? labels?.y ?? 'y';
    const xName = px?.label ?? (labels?.x[xVar] && labels.x[xVar] !== xVar ? `${labels.x[xVar]}` : xVar);
    const xLabel = multi ? `fitted ${withUnit(yName, py?.unit)} (${sel?.name ?? ''})` : withUnit(xName, px?.unit);
    const yLabel = withUnit(yName, py?.unit);
    this.describe(r, sel, { xLabel, yLabel, logX, logY, n: total, shown });
    const main = this.config(datasets, kinds, 'main', { logX, logY, xLabel, yLabel });
    this.mainKinds = kinds;
    this.mainChart = this.apply(this.mainChart, el.mainCanvas, main);

    // Residuals of the selected model.
    const rd: ChartDataset<'scatter', Pt[]>[] = [];
    const rk: Kind[] = [];
    const sp = sel?.points;
    const standardized = st.residual === 'standardized';
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
      const color = ctx.modelColor(r, sel!.name);
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
    el.residHead.hidden = !sp;
    const residConf = this.config(rd, rk, 'resid', { logX, logY: false, xLabel, yLabel: standardized ? 'standardized residual' : withUnit('residual', py?.unit) });
    this.residKinds = rk;
    this.residChart = this.apply(this.residChart, el.residCanvas, residConf);
    el.plotNote.replaceChildren(...notes.map(n => h('p', null, n)));
  }

  private config(datasets: ChartDataset<'scatter', Pt[]>[], kinds: Kind[], which: 'main' | 'resid',
    ax: { logX: boolean; logY: boolean; xLabel: string; yLabel: string }): ChartConfiguration<'scatter', Pt[]> {
    const t = this.ctx.theme;
    const view = this;
    // fonts per chart, never through the global Chart.defaults (two views on a page must not share them)
    const font = { family: t.fontFamily, size: Math.max(10, Math.round(t.fontSize * 0.9)) };
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
        if (view.render.transparent) return;
        const ctx = chart.ctx;
        ctx.save();
        ctx.globalCompositeOperation = 'destination-over';
        ctx.fillStyle = view.ctx.theme.background;
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
        ...(this.render.devicePixelRatio ? { devicePixelRatio: this.render.devicePixelRatio } : {}),
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
            if (row !== undefined) view.ctx.opts.onRevealRow?.(row);
            return;
          }
        },
        scales: {
          x: {
            type: ax.logX ? 'logarithmic' : 'linear',
            title: { display: true, text: ax.xLabel, color: t.muted, font },
            grid: { color: ax.logX ? minorGrid : gridColor, lineWidth: t.highContrast ? 1 : 0.8 },
            border: { color: t.border },
            // On a log axis we label only 1-2-5 steps ourselves, so Chart.js must not skip ticks on top of that.
            ticks: { color: t.foreground, font, callback: ax.logX ? logTick : tick, maxRotation: 0, autoSkip: !ax.logX, autoSkipPadding: 12 },
          },
          y: {
            type: ax.logY ? 'logarithmic' : 'linear',
            title: { display: true, text: ax.yLabel, color: t.muted, font },
            grid: { color: ax.logY ? minorGrid : gridColor, lineWidth: t.highContrast ? 1 : 0.8 },
            border: { color: t.border },
            ticks: { color: t.foreground, font, callback: ax.logY ? logTick : tick, autoSkip: !ax.logY },
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

  private apply(chart: Chart<'scatter', Pt[]> | null, canvas: HTMLCanvasElement, cfg: ChartConfiguration<'scatter', Pt[]>): Chart<'scatter', Pt[]> {
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

  /** The drawn charts, for the SVG writer (exports.ts). */
  drawn(): { main: Chart<'scatter', Pt[]> | null; resid: Chart<'scatter', Pt[]> | null; residShown: boolean } {
    return { main: this.mainChart, resid: this.residChart, residShown: !this.el.residBox.hidden };
  }

  /** The labelled ticks of one axis as drawn (for tests and the SVG writer). */
  axisLabels(which: 'main' | 'resid', axis: 'x' | 'y'): string[] {
    const chart = which === 'main' ? this.mainChart : this.residChart;
    const s = chart?.scales[axis];
    if (!s) return [];
    return s.ticks.map(k => (Array.isArray(k.label) ? k.label.join(' ') : String(k.label ?? ''))).filter(Boolean);
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
    const r = this.r;
    if (!pt || pt.i < 0 || !r) return undefined;
    const pts = pointsOf(r, this.ctx.selectedModel(r));
    return pts?.row[pt.i];
  }

  private pointLines(pt: Pt): string[] {
    const r = this.r;
    if (!r || pt.i < 0) return [];
    const sel = this.ctx.selectedModel(r);
    const pts = pointsOf(r, sel);
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
}

// ------------------------------------------------------------------ SVG

/** Text escaped for SVG/XML. */
export function xmlText(s: string): string {
  return s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');
}

const num = (v: number) => (Math.round(v * 100) / 100).toString();

/**
 * One drawn chart as SVG elements at (0, dy), in CSS pixels: grid, axes, tick labels and titles from the chart's own
 * scales, then every dataset from its laid-out elements (bands as filled polygons, curves as polylines with their
 * dash pattern, points as circles). The same figure as on screen, written with a handful of SVG primitives.
 */
export function chartSvg(chart: Chart<'scatter', Pt[]>, t: ThemeColors, dy: number): string {
  const out: string[] = [];
  const a = chart.chartArea;
  const font = `font-family="${xmlText(t.fontFamily)}" font-size="${Math.max(10, Math.round(t.fontSize * 0.9))}"`;
  out.push(`<g transform="translate(0 ${num(dy)})">`);
  out.push(`<clipPath id="cw-clip-${dy}"><rect x="${num(a.left)}" y="${num(a.top)}" width="${num(a.right - a.left)}" height="${num(a.bottom - a.top)}"/></clipPath>`);
  for (const id of ['x', 'y'] as const) {
    const s = chart.scales[id];
    if (!s) continue;
    const log = s.type === 'logarithmic';
    s.ticks.forEach((k, i) => {
      const p = s.getPixelForTick(i);
      const label = Array.isArray(k.label) ? k.label.join(' ') : String(k.label ?? '');
      const color = log && !label ? withAlpha(t.grid, 0.35) : t.grid;
      if (id === 'x') out.push(`<line x1="${num(p)}" x2="${num(p)}" y1="${num(a.top)}" y2="${num(a.bottom)}" stroke="${color}" stroke-width="0.8"/>`);
      else out.push(`<line x1="${num(a.left)}" x2="${num(a.right)}" y1="${num(p)}" y2="${num(p)}" stroke="${color}" stroke-width="0.8"/>`);
      if (!label) return;
      if (id === 'x') out.push(`<text x="${num(p)}" y="${num(a.bottom + 16)}" text-anchor="middle" fill="${t.foreground}" ${font}>${xmlText(label)}</text>`);
      else out.push(`<text x="${num(a.left - 6)}" y="${num(p + 4)}" text-anchor="end" fill="${t.foreground}" ${font}>${xmlText(label)}</text>`);
    });
    const title = (s.options as { title?: { text?: string | string[] } }).title?.text;
    const text = Array.isArray(title) ? title.join(' ') : title ?? '';
    if (text && id === 'x') out.push(`<text x="${num((a.left + a.right) / 2)}" y="${num(a.bottom + 34)}" text-anchor="middle" fill="${t.muted}" ${font}>${xmlText(text)}</text>`);
    if (text && id === 'y') out.push(`<text transform="translate(14 ${num((a.top + a.bottom) / 2)}) rotate(-90)" text-anchor="middle" fill="${t.muted}" ${font}>${xmlText(text)}</text>`);
  }
  out.push(`<rect x="${num(a.left)}" y="${num(a.top)}" width="${num(a.right - a.left)}" height="${num(a.bottom - a.top)}" fill="none" stroke="${t.border}" stroke-width="1"/>`);
  const sets = chart.data.datasets;
  const xy = (di: number) => chart.getDatasetMeta(di).data.map(e => [e.x, e.y] as const).filter(([x, y]) => Number.isFinite(x) && Number.isFinite(y));
  // draw in Chart.js's order: higher `order` first (underneath)
  const order = sets.map((d, i) => ({ d, i })).sort((p, q) => (q.d.order ?? 0) - (p.d.order ?? 0));
  out.push(`<g clip-path="url(#cw-clip-${dy})">`);
  for (const { d, i } of order) {
    const pts = xy(i);
    if (!pts.length) continue;
    const stroke = typeof d.borderColor === 'string' ? d.borderColor : t.foreground;
    const dash = Array.isArray(d.borderDash) && d.borderDash.length ? ` stroke-dasharray="${d.borderDash.join(' ')}"` : '';
    if (d.fill === '+1' && sets[i + 1]) {
      const low = xy(i + 1).reverse();
      const fill = typeof d.backgroundColor === 'string' ? d.backgroundColor : 'none';
      out.push(`<polygon points="${[...pts, ...low].map(([x, y]) => `${num(x)},${num(y)}`).join(' ')}" fill="${fill}" stroke="none"/>`);
    }
    if (d.showLine) {
      const w = typeof d.borderWidth === 'number' ? d.borderWidth : 1;
      if (w > 0) out.push(`<polyline points="${pts.map(([x, y]) => `${num(x)},${num(y)}`).join(' ')}" fill="none" stroke="${stroke}" stroke-width="${num(w)}"${dash} stroke-linejoin="round"/>`);
      continue;
    }
    const r = typeof d.pointRadius === 'number' ? d.pointRadius : 3;
    const fill = typeof d.pointBackgroundColor === 'string' ? d.pointBackgroundColor : t.points;
    const ps = typeof d.pointBorderColor === 'string' ? d.pointBorderColor : 'none';
    const pw = typeof d.pointBorderWidth === 'number' ? d.pointBorderWidth : 0;
    out.push(`<g fill="${fill}" stroke="${ps}" stroke-width="${num(pw)}">${pts.map(([x, y]) => `<circle cx="${num(x)}" cy="${num(y)}" r="${num(r)}"/>`).join('')}</g>`);
  }
  out.push('</g></g>');
  return out.join('\n');
}
