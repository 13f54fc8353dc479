// The HTML around the webview code, as plain strings (no DOM; runs in the host and the CLI). One template serves
// the VS Code panel (script and CSS by URI, nonce CSP) and the standalone report (everything inlined, hash CSP,
// reports embedded as JSON), so both show the same drawing.
import { sha256Base64 } from './sha256';
import type { RunResult } from '../engine/report';
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
      `<script type="application/json" id="${DATA_ELEMENT_ID}">${jsonForScript(reports)}</script>`,
      `<script>${js}</script>`,
    ].join('\n'),
  });
}
