// What the panel saves: the parameters as CSV (full precision), the report as JSON, and the plots as one PNG image
// composed from the drawn canvases under a strip that names the report and each curve.
import type { FitReport, RunResult } from '../src/engine/report';
import { baseName, type ViewContext } from './state';
import { dashFor } from './theme';

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

/** The plots (data + residuals, `resid` null when hidden) as one PNG data URL on the theme's background, under a
 *  strip naming the report, the selected model and each curve (colour and dash), so the image stands on its own. */
export function plotPng(ctx: ViewContext, r: FitReport, main: HTMLCanvasElement, resid: HTMLCanvasElement | null): string {
  const scale = main.width / Math.max(1, main.clientWidth || main.width);
  const strip = Math.round(46 * scale);
  const out = document.createElement('canvas');
  out.width = Math.max(main.width, resid?.width ?? 0);
  out.height = strip + main.height + (resid ? resid.height : 0);
  const g = out.getContext('2d');
  if (!g) return main.toDataURL('image/png');
  const t = ctx.theme;
  g.fillStyle = t.background;
  g.fillRect(0, 0, out.width, out.height);
  g.textBaseline = 'middle';
  g.fillStyle = t.foreground;
  g.font = `600 ${Math.round(14 * scale)}px ${t.fontFamily}`;
  const pad = Math.round(12 * scale);
  g.fillText(r.title || baseName(r.spec), pad, Math.round(14 * scale));
  g.font = `${Math.round(11.5 * scale)}px ${t.fontFamily}`;
  let x = pad;
  const y = Math.round(34 * scale);
  const sel = ctx.selectedModel(r);
  r.models.forEach((m, i) => {
    if (m.status !== 'converged') return;
    g.strokeStyle = ctx.modelColor(r, m.name);
    g.lineWidth = t.lineWidth * scale;
    g.setLineDash(dashFor(i).map(d => d * scale));
    g.beginPath();
    g.moveTo(x, y);
    g.lineTo(x + 22 * scale, y);
    g.stroke();
    g.setLineDash([]);
    x += 26 * scale;
    const label = `${m.name}${m.name === r.best ? ' \u2605' : ''}${m.name === sel?.name ? ' (bands, residuals)' : ''}`;
    g.fillStyle = t.foreground;
    g.fillText(label, x, y);
    x += g.measureText(label).width + 16 * scale;
  });
  g.drawImage(main, 0, strip);
  if (resid) g.drawImage(resid, 0, strip + main.height);
  return out.toDataURL('image/png');
}
