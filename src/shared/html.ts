// The HTML around the webview code, as plain strings (no DOM; runs in the host and the CLI). One template serves
// the VS Code panel (script and CSS by URI, nonce CSP) and the standalone report (everything inlined, hash CSP,
// reports embedded as JSON), so both show the same drawing.
import { sha256Base64 } from './sha256';
import type { FitReport, RunResult, UnknownReport } from '../engine/report';
import { DATA_ELEMENT_ID, ROOT_ID } from './ids';

/** Escape text for HTML content and attribute values. */
export function escapeHtml(s: string): string {
  return s.replace(/[&<>"']/g, c => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);
}

/**
 * JSON safe inside <script type="application/json">: '<', '>' and '&' (so no '</script' or '<!--') and U+2028/2029
 * are written as \u escapes, which JSON.parse turns back into the same characters. Typed arrays become arrays.
 */
export function jsonForScript(value: unknown): string {
  const json = JSON.stringify(value, (_k, v) => (ArrayBuffer.isView(v) && !(v instanceof DataView) ? Array.from(v as unknown as ArrayLike<number>) : v));
  return (json ?? 'null')
    .replace(/</g, '\\u003c')
    .replace(/>/g, '\\u003e')
    .replace(/&/g, '\\u0026')
    .replace(/\u2028/g, '\\u2028')
    .replace(/\u2029/g, '\\u2029');
}

/**
 * JavaScript safe to inline in a <script> element: '</script' becomes '<\/script', '<!--' becomes '<\u0021--' and
 * '<script' becomes '<\u0073cript' — each means the same in strings, template literals, regular expressions
 * and identifiers, and the HTML parser can no longer see a tag or comment in it.
 */
export function scriptForInline(js: string): string {
  return js.replace(/<\/(script)/gi, '<\\/$1').replace(/<!--/g, '<\\u0021--').replace(/<(s)(cript)/gi, (_m, s: string, rest: string) => `<\\u00${s.charCodeAt(0).toString(16)}${rest}`);
}

/** CSS safe to inline in a <style> element. */
export function styleForInline(css: string): string {
  return css.replace(/<\/(style)/gi, '<\\/$1');
}

function sha256(text: string): string {
  return `'sha256-${sha256Base64(text)}'`;
}

interface PageParts {
  csp: string;
  title: string;
  head: string;
  body: string;
}

function page(p: PageParts): string {
  return [
    '<!DOCTYPE html>',
    '<html lang="en">',
    '<head>',
    '<meta charset="utf-8">',
    `<meta http-equiv="Content-Security-Policy" content="${escapeHtml(p.csp)}">`,
    '<meta name="viewport" content="width=device-width, initial-scale=1">',
    '<meta name="color-scheme" content="light dark">',
    `<title>${escapeHtml(p.title)}</title>`,
    p.head,
    '</head>',
    '<body>',
    p.body,
    '</body>',
    '</html>',
    '',
  ].join('\n');
}

/** The VS Code panel's HTML: dist/webview.js and media/panel.css by URI, strict CSP with a nonce. */
export function panelHtml(opts: { scriptUri: string; cssUri: string; nonce: string; cspSource: string; title?: string }): string {
  const n = opts.nonce;
  if (!/^[A-Za-z0-9+/=_-]{16,}$/.test(n)) throw new Error('panelHtml: the nonce must be at least 16 base64 characters');
  const csp = [
    "default-src 'none'",
    `img-src ${opts.cspSource} data: blob:`,
    `style-src ${opts.cspSource} 'nonce-${n}'`,
    `font-src ${opts.cspSource}`,
    `script-src 'nonce-${n}'`,
    "base-uri 'none'",
    "form-action 'none'",
  ].join('; ');
  return page({
    csp,
    title: opts.title ?? 'Curvewright',
    head: `<link rel="stylesheet" href="${escapeHtml(opts.cssUri)}" nonce="${escapeHtml(n)}">`,
    body: [
      `<div id="${ROOT_ID}"><p class="cw-waiting">Waiting for the fit\u2026</p></div>`,
      `<script nonce="${escapeHtml(n)}" src="${escapeHtml(opts.scriptUri)}"></script>`,
    ].join('\n'),
  });
}

/**
 * One self-contained HTML report: the bundled webview code and the panel CSS inlined, every report embedded as JSON,
 * no network (CSP default-src 'none', inline code allowed only by its SHA-256 hash). Deterministic for the same input.
 */
export function buildReportHtml(reports: RunResult[], assets: { js: string; css: string }, opts?: { title?: string }): string {
  const js = scriptForInline(assets.js);
  const css = styleForInline(assets.css);
  const first = reports[0];
  const title = opts?.title ?? (reports.length === 1 && first
    ? `${('title' in first && first.title) || first.spec} \u2014 Curvewright report`
    : `Curvewright report \u2014 ${reports.length} specs`);
  const csp = [
    "default-src 'none'",
    'img-src data: blob:',
    `style-src ${sha256(css)}`,
    `script-src ${sha256(js)}`,
    "base-uri 'none'",
    "form-action 'none'",
  ].join('; ');
  return page({
    csp,
    title,
    head: `<style>${css}</style>`,
    body: [
      `<div id="${ROOT_ID}" class="cw-standalone"><noscript>This report needs JavaScript to draw its plots and tables.</noscript></div>`,
      ...reports.map(calibrationHtml).filter(Boolean),
      `<script type="application/json" id="${DATA_ELEMENT_ID}">${jsonForScript(reports)}</script>`,
      `<script>${js}</script>`,
    ].join('\n'),
  });
}

/** A number for reading in the report tables (4 significant digits; the embedded JSON keeps full precision). */
function n4(v: number | null | undefined): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return '\u2014';
  return Math.abs(v) >= 1e-3 && Math.abs(v) < 1e6 ? String(Number(v.toPrecision(4))) : v.toExponential(3);
}

function cells(tag: 'th' | 'td', values: string[]): string {
  return '<tr>' + values.map(v => `<${tag}>${escapeHtml(v)}</${tag}>`).join('') + '</tr>';
}

/**
 * The read-outs of one report as static tables (unknowns, controls, standards' recovery, limits; docs/calibration.md),
 * drawn without script so they print and read as they are; '' when the report has none.
 */
export function calibrationHtml(r: RunResult): string {
  if ('error' in r) return '';
  const f = r as FitReport;
  if (!f.unknowns && !f.controls && !f.limits && !f.potency) return '';
  const iv = (i: [number | null, number | null] | null) => (i ? `[${n4(i[0])}, ${n4(i[1])}]` : '');
  const flags = (u: UnknownReport) => u.flags.map(x => x.message).join(' ');
  const conf = `${n4(f.confidence * 100)} %`;
  const parts: string[] = [`<section class="cw-calibration"><h2>Read-outs: ${escapeHtml(f.title ?? f.spec)}</h2>`];
  if (f.unknowns) {
    const u = f.unknowns;
    parts.push(`<h3>Unknowns (model ${escapeHtml(u.model)}; ${escapeHtml(conf)} intervals for the mean of m readings; value = x \u00d7 dilution)</h3><table>`);
    parts.push(cells('th', ['id', 'm', 'mean y', 'x', 'interval', 'dilution', 'value', 'interval', 'flags']));
    for (const x of u.results) parts.push(cells('td', [x.id, String(x.m), n4(x.meanY), n4(x.x), iv(x.interval), n4(x.dilution), n4(x.value), iv(x.valueInterval), flags(x)]));
    parts.push('</table>');
  }
  if (f.controls) {
    const c = f.controls;
    if (c.results.length) {
      parts.push(`<h3>Controls (model ${escapeHtml(c.model)}${c.accept ? `; accept ${n4(c.accept[0])}\u2013${n4(c.accept[1])} %` : ''}): ${c.pass === null ? 'no verdict' : c.pass ? 'all passed' : 'FAILED'}</h3><table>`);
      parts.push(cells('th', ['id', 'm', 'nominal', 'value', 'recovery %', 'interval', 'verdict', 'flags']));
      for (const x of c.results) parts.push(cells('td', [x.id, String(x.m), n4(x.nominal), n4(x.value), n4(x.recovery), iv(x.recoveryInterval), x.pass === null ? '' : x.pass ? 'pass' : 'FAIL', flags(x)]));
      parts.push('</table>');
    }
    parts.push(`<h3>Standards back-calculated${c.acceptStandards ? ` (accept ${n4(c.acceptStandards[0])}\u2013${n4(c.acceptStandards[1])} %)` : ''}</h3><table>`);
    parts.push(cells('th', ['nominal x', 'm', 'mean y', 'back-calculated', 'interval', 'recovery %', 'verdict']));
    for (const x of c.standards) parts.push(cells('td', [n4(x.x), String(x.m), n4(x.meanY), n4(x.back), iv(x.interval), n4(x.recovery), x.pass === null ? '' : x.pass ? 'pass' : 'FAIL']));
    parts.push('</table>');
  }
  if (f.limits) {
    const l = f.limits;
    parts.push(`<h3>Limits (model ${escapeHtml(l.model)})</h3><table>`);
    parts.push(cells('th', ['LOD', 'LOQ', 'detection limit (Hubaux\u2013Vos)', '\u03c3', 'from']));
    parts.push(cells('td', [n4(l.lod), n4(l.loq), n4(l.detection.x), n4(l.sigma.value), l.sigma.from === 'blanks' ? `${l.sigma.n} blank readings` : 'the residuals']));
    parts.push(`</table><p>${escapeHtml(l.note)}</p>`);
  }
  if (f.potency) {
    const p = f.potency;
    parts.push(`<h3>Relative potency against ${escapeHtml(p.reference)} (model ${escapeHtml(p.model)}; ${escapeHtml(conf)} Fieller intervals)</h3><table>`);
    parts.push(cells('th', ['test', 'potency', 'interval', 'slope ratio', 'interval', 'span ratio', 'interval', 'parallelism']));
    for (const x of p.results) {
      const q = x.parallelism;
      parts.push(cells('td', [x.test, n4(x.ratio), iv(x.interval), q ? n4(q.slopeRatio.value) : '', q ? iv(q.slopeRatio.interval) : '', q ? n4(q.spanRatio.value) : '', q ? iv(q.spanRatio.interval) : '', q?.verdict ?? '']));
    }
    parts.push(`</table><p>${escapeHtml(p.note)}</p>`);
  }
  parts.push('</section>');
  return parts.join('\n');
}
