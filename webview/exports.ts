// What the panel saves: the parameters as CSV (full precision), the report as JSON, and the figure (plots under a
// strip that names the report and each curve) as PNG at a chosen size, pixel ratio and background, or as SVG.
import type { FitReport, RunResult } from '../src/engine/report';
import { ChartsView, chartSvg, xmlText } from './charts';
import { baseName, type ViewContext, type ViewState } from './state';
import { dashFor, paperTheme, type ThemeColors } from './theme';

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

/** What the user chose for a saved figure. */
export interface FigureOptions {
  /** size of the whole figure in CSS pixels (the strip naming the curves included) */
  width: number;
  height: number;
  /** pixels per CSS pixel of the PNG (2 for a sharp print) */
  scale: number;
  /** the panel's theme, white with our light colours, or transparent with our light colours */
  background: 'theme' | 'white' | 'transparent';
}

/** The figure's look: who draws it (colours, background, selected model) — the view's, or paper for a document. */
interface Look {
  theme: ThemeColors;
  transparent: boolean;
  color(name: string): string;
  selected?: string;
}

const STRIP = 46;

function lookOf(ctx: ViewContext, r: FitReport, background: FigureOptions['background']): Look {
  const theme = background === 'theme' ? ctx.theme : paperTheme(ctx.theme);
  return {
    theme, transparent: background === 'transparent',
    color: name => theme.series[ctx.modelIndex(r, name) % theme.series.length] ?? theme.accent,
    selected: ctx.selectedModel(r)?.name,
  };
}

/** The legend strip: the report's title, then each converged model's line sample and name. */
function stripItems(r: FitReport, look: Look): { title: string; items: { name: string; label: string; color: string; dash: number[] }[] } {
  const items = r.models.map((m, i) => ({ m, i })).filter(({ m }) => m.status === 'converged').map(({ m, i }) => ({
    name: m.name, color: look.color(m.name), dash: dashFor(i),
    label: `${m.name}${m.name === r.best ? ' \u2605' : ''}${m.name === look.selected ? ' (bands, residuals)' : ''}`,
  }));
  return { title: r.title || baseName(r.spec), items };
}

/** The plots (data + residuals, `resid` null when hidden) as one PNG data URL under a strip naming the report, the
 *  selected model and each curve (colour and dash), so the image stands on its own. */
export function plotPng(ctx: ViewContext, r: FitReport, main: HTMLCanvasElement, resid: HTMLCanvasElement | null, look: Look = lookOf(ctx, r, 'theme')): string {
  const scale = main.width / Math.max(1, main.clientWidth || main.width);
  const strip = Math.round(STRIP * scale);
  const out = document.createElement('canvas');
  out.width = Math.max(main.width, resid?.width ?? 0);
  out.height = strip + main.height + (resid ? resid.height : 0);
  const g = out.getContext('2d');
  if (!g) return main.toDataURL('image/png');
  const t = look.theme;
  if (!look.transparent) {
    g.fillStyle = t.background;
    g.fillRect(0, 0, out.width, out.height);
  }
  g.textBaseline = 'middle';
  g.fillStyle = t.foreground;
  g.font = `600 ${Math.round(14 * scale)}px ${t.fontFamily}`;
  const pad = Math.round(12 * scale);
  const s = stripItems(r, look);
  g.fillText(s.title, pad, Math.round(14 * scale));
  g.font = `${Math.round(11.5 * scale)}px ${t.fontFamily}`;
  let x = pad;
  const y = Math.round(34 * scale);
  for (const it of s.items) {
    g.strokeStyle = it.color;
    g.lineWidth = t.lineWidth * scale;
    g.setLineDash(it.dash.map(d => d * scale));
    g.beginPath();
    g.moveTo(x, y);
    g.lineTo(x + 22 * scale, y);
    g.stroke();
    g.setLineDash([]);
    x += 26 * scale;
    g.fillStyle = t.foreground;
    g.fillText(it.label, x, y);
    x += g.measureText(it.label).width + 16 * scale;
  }
  g.drawImage(main, 0, strip);
  if (resid) g.drawImage(resid, 0, strip + main.height);
  return out.toDataURL('image/png');
}

/**
 * Draw the figure again, off screen, at the chosen size and pixel ratio and in the chosen colours (the panel's own
 * plots stay as they are), and return it as PNG and SVG. The SVG is written by charts.ts's small writer from the same
 * laid-out charts, so both files show the same figure.
 */
export function renderFigure(ctx: ViewContext, r: FitReport, st: ViewState, o: FigureOptions): { png: string; svg: string } {
  const look = lookOf(ctx, r, o.background);
  const fctx: ViewContext = { ...ctx, theme: look.theme, opts: ctx.opts, selectedModel: x => ctx.selectedModel(x), modelIndex: (x, n) => ctx.modelIndex(x, n), modelColor: (_x, n) => look.color(n), select: () => {} };
  const charts = new ChartsView(fctx, () => st, () => {}, { devicePixelRatio: o.scale, transparent: look.transparent });
  const box = document.createElement('div');
  box.className = 'cw-offscreen';
  box.setAttribute('aria-hidden', 'true');
  const width = Math.max(320, Math.round(o.width)), height = Math.max(240, Math.round(o.height));
  const residH = Math.round((height - STRIP) * 0.26);
  const mainH = height - STRIP - residH;
  box.style.width = `${width}px`;
  charts.el.mainBox.style.height = `${mainH}px`;
  charts.el.mainBox.style.aspectRatio = 'auto';
  charts.el.mainBox.style.maxHeight = 'none';
  charts.el.residBox.style.maxHeight = 'none';
  charts.el.residBox.style.height = `${residH}px`;
  box.append(charts.el.mainBox, charts.el.residBox);
  document.body.append(box);
  try {
    charts.draw(r, ctx.selectedModel(r), st);
    const c = charts.canvases()!;
    const png = plotPng(fctx, r, c.main, c.resid, look);
    const d = charts.drawn();
    const parts: string[] = [];
    const t = look.theme;
    const s = stripItems(r, look);
    const font = `font-family="${xmlText(t.fontFamily)}"`;
    parts.push(`<text x="12" y="18" fill="${t.foreground}" ${font} font-size="14" font-weight="600">${xmlText(s.title)}</text>`);
    let x = 12;
    for (const it of s.items) {
      parts.push(`<line x1="${x}" x2="${x + 22}" y1="34" y2="34" stroke="${it.color}" stroke-width="${t.lineWidth}"${it.dash.length ? ` stroke-dasharray="${it.dash.join(' ')}"` : ''}/>`);
      x += 26;
      parts.push(`<text x="${x}" y="38" fill="${t.foreground}" ${font} font-size="11.5">${xmlText(it.label)}</text>`);
      x += Math.round(it.label.length * 6.4) + 16; // an estimate of the text's width (no layout engine here)
    }
    if (d.main) parts.push(chartSvg(d.main, t, STRIP));
    if (d.resid && d.residShown) parts.push(chartSvg(d.resid, t, STRIP + mainH));
    const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="${width}" height="${height}" viewBox="0 0 ${width} ${height}">\n<title>${xmlText(s.title)}</title>\n`
      + (look.transparent ? '' : `<rect width="100%" height="100%" fill="${t.background}"/>\n`) + parts.join('\n') + '\n</svg>\n';
    return { png, svg };
  } finally {
    charts.destroy();
    box.remove();
  }
}
