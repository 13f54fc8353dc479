// Panel colours read at run time from VS Code's --vscode-* CSS variables, with our own palettes as fallbacks for the
// standalone HTML report (light, and dark under prefers-color-scheme: dark). Re-read whenever the theme changes.

export type ThemeKindName = 'light' | 'dark' | 'high-contrast' | 'high-contrast-light';

export interface ThemeColors {
  kind: ThemeKindName;
  /** true for both high-contrast kinds: thicker lines, dash patterns, outlined points */
  highContrast: boolean;
  foreground: string;
  /** secondary text (axis titles, notes) */
  muted: string;
  background: string;
  border: string;
  /** chart grid lines */
  grid: string;
  accent: string;
  error: string;
  warning: string;
  info: string;
  ok: string;
  /** one colour per model curve, cycled */
  series: string[];
  /** colour of the observed data points */
  points: string;
  /** fill of the confidence band of the mean (in the first series colour; bands take the selected model's colour at ciAlpha) */
  ciFill: string;
  /** fill of the prediction band */
  piFill: string;
  /** opacity of the confidence-band fill */
  ciAlpha: number;
  /** opacity of the prediction-band fill */
  piAlpha: number;
  /** width of a model curve in CSS pixels (the selected model is drawn wider) */
  lineWidth: number;
  fontFamily: string;
  fontSize: number;
}

interface Palette {
  foreground: string; muted: string; background: string; border: string; grid: string; accent: string;
  error: string; warning: string; info: string; ok: string; series: string[]; points: string;
}

// Our own palettes (chosen for this project; not taken from any other application).
const LIGHT: Palette = {
  foreground: '#1d2330', muted: '#5b6472', background: '#ffffff', border: '#d5d9e0', grid: '#e7e9ee',
  accent: '#2f6db5', error: '#b3261e', warning: '#9a6700', info: '#2f6db5', ok: '#1f7a4a',
  series: ['#2f6db5', '#c2452d', '#2f8f5b', '#a87508', '#7a4fb8', '#17828f'],
  points: '#3a4250',
};
const DARK: Palette = {
  foreground: '#d6dbe4', muted: '#9aa3b2', background: '#161a21', border: '#343b47', grid: '#272d37',
  accent: '#6fa8ec', error: '#f08a80', warning: '#e2b443', info: '#6fa8ec', ok: '#5cc28a',
  series: ['#6fa8ec', '#ef7b63', '#5cc28a', '#e2b443', '#b48cf0', '#4cc3d1'],
  points: '#c9d0db',
};
const HC_DARK: Palette = {
  foreground: '#ffffff', muted: '#ffffff', background: '#000000', border: '#6fc3df', grid: '#3a3a3a',
  accent: '#ffd000', error: '#ff6b6b', warning: '#ffd000', info: '#6fc3df', ok: '#89f58b',
  series: ['#ffd000', '#6fc3df', '#ff8cf0', '#89f58b', '#ff9d4d', '#ffffff'],
  points: '#ffffff',
};
const HC_LIGHT: Palette = {
  foreground: '#000000', muted: '#000000', background: '#ffffff', border: '#0f4a85', grid: '#c8c8c8',
  accent: '#0f4a85', error: '#b5200d', warning: '#7a4d00', info: '#0f4a85', ok: '#1b5e20',
  series: ['#0f4a85', '#b5200d', '#1b5e20', '#7a4d00', '#5c2d91', '#000000'],
  points: '#000000',
};

export const FALLBACK_PALETTES: Record<ThemeKindName, Palette> = {
  light: LIGHT, dark: DARK, 'high-contrast': HC_DARK, 'high-contrast-light': HC_LIGHT,
};

/** Which kind of theme the document shows: VS Code's body classes first, then the browser's preferences. */
export function themeKind(doc: Document = document): ThemeKindName {
  const cls = doc.body?.classList;
  if (cls) {
    if (cls.contains('vscode-high-contrast-light')) return 'high-contrast-light';
    if (cls.contains('vscode-high-contrast')) return 'high-contrast';
    if (cls.contains('vscode-dark')) return 'dark';
    if (cls.contains('vscode-light')) return 'light';
  }
  const view = doc.defaultView;
  const mq = (q: string) => !!view?.matchMedia && view.matchMedia(q).matches;
  const dark = mq('(prefers-color-scheme: dark)');
  if (mq('(forced-colors: active)') || mq('(prefers-contrast: more)')) return dark ? 'high-contrast' : 'high-contrast-light';
  return dark ? 'dark' : 'light';
}

/** Read the colours from the document's CSS variables, falling back to our palette of the detected kind. */
export function readTheme(doc: Document = document): ThemeColors {
  const kind = themeKind(doc);
  const pal = FALLBACK_PALETTES[kind];
  const style = doc.defaultView && doc.body ? doc.defaultView.getComputedStyle(doc.body) : null;
  const v = (name: string): string => (style ? style.getPropertyValue(name).trim() : '');
  const pick = (fallback: string, ...names: string[]): string => {
    for (const n of names) {
      const got = v(n);
      if (got) return got;
    }
    return fallback;
  };
  const highContrast = kind === 'high-contrast' || kind === 'high-contrast-light';
  const dark = kind === 'dark' || kind === 'high-contrast';
  const ciAlpha = highContrast ? 0.35 : dark ? 0.3 : 0.26;
  const piAlpha = highContrast ? 0.18 : dark ? 0.13 : 0.1;
  const chartNames = ['blue', 'red', 'green', 'yellow', 'purple', 'orange'];
  // Keep our ordering (blue, red, green, amber, purple, teal) and take VS Code's chart colours where they exist.
  const series = pal.series.map((fb, i) => (i < chartNames.length ? pick(fb, `--vscode-charts-${chartNames[i]}`) : fb));
  const foreground = pick(pal.foreground, '--vscode-editor-foreground', '--vscode-foreground');
  const accent = series[0] ?? pal.accent;
  const fontSizeText = pick('13px', '--vscode-font-size');
  const fontSize = Number.parseFloat(fontSizeText) || 13;
  return {
    kind,
    highContrast,
    foreground,
    muted: pick(pal.muted, '--vscode-descriptionForeground'),
    background: pick(pal.background, '--vscode-editor-background'),
    border: pick(pal.border, '--vscode-contrastBorder', '--vscode-panel-border', '--vscode-widget-border'),
    grid: highContrast ? pal.grid : pick(pal.grid, '--vscode-editorWidget-border', '--vscode-panel-border'),
    accent: pick(accent, '--vscode-focusBorder'),
    error: pick(pal.error, '--vscode-errorForeground', '--vscode-editorError-foreground'),
    warning: pick(pal.warning, '--vscode-editorWarning-foreground'),
    info: pick(pal.info, '--vscode-editorInfo-foreground'),
    ok: pick(pal.ok, '--vscode-testing-iconPassed', '--vscode-charts-green'),
    series,
    points: highContrast ? foreground : pick(pal.points, '--vscode-charts-foreground'),
    ciFill: withAlpha(series[0] ?? pal.accent, ciAlpha),
    piFill: withAlpha(series[0] ?? pal.accent, piAlpha),
    ciAlpha,
    piAlpha,
    lineWidth: highContrast ? 3 : 1.75,
    fontFamily: pick('system-ui, -apple-system, "Segoe UI", sans-serif', '--vscode-font-family'),
    fontSize,
  };
}

/**
 * The colours of a figure saved for a document on white or on a transparent background, whatever the panel's
 * theme: our light palette (the high-contrast light one from a high-contrast theme), the panel's font and widths.
 */
export function paperTheme(t: ThemeColors): ThemeColors {
  const pal = t.highContrast ? HC_LIGHT : LIGHT;
  const ciAlpha = t.highContrast ? 0.35 : 0.26, piAlpha = t.highContrast ? 0.18 : 0.1;
  return {
    ...t,
    kind: t.highContrast ? 'high-contrast-light' : 'light',
    foreground: pal.foreground, muted: pal.muted, background: '#ffffff', border: pal.border, grid: pal.grid,
    accent: pal.accent, error: pal.error, warning: pal.warning, info: pal.info, ok: pal.ok,
    series: [...pal.series], points: pal.points,
    ciFill: withAlpha(pal.series[0]!, ciAlpha), piFill: withAlpha(pal.series[0]!, piAlpha), ciAlpha, piAlpha,
  };
}

/** Dash pattern of the i-th model curve, so models differ by more than colour (the first one is solid). */
export function dashFor(i: number): number[] {
  const patterns: number[][] = [[], [7, 4], [2, 3], [10, 3, 2, 3], [4, 4], [12, 4, 2, 4, 2, 4]];
  return patterns[i % patterns.length]!;
}

/** Colour with the given opacity; understands #rgb, #rrggbb, #rrggbbaa, rgb() and rgba(); anything else is returned unchanged. */
export function withAlpha(color: string, alpha: number): string {
  const c = color.trim();
  let r: number, g: number, b: number;
  let m = /^#([0-9a-f]{3,4})$/i.exec(c);
  if (m) {
    const s = m[1]!;
    r = parseInt(s[0]! + s[0]!, 16); g = parseInt(s[1]! + s[1]!, 16); b = parseInt(s[2]! + s[2]!, 16);
  } else if ((m = /^#([0-9a-f]{6})([0-9a-f]{2})?$/i.exec(c))) {
    const s = m[1]!;
    r = parseInt(s.slice(0, 2), 16); g = parseInt(s.slice(2, 4), 16); b = parseInt(s.slice(4, 6), 16);
  } else if ((m = /^rgba?\(\s*([\d.]+)[\s,]+([\d.]+)[\s,]+([\d.]+)/i.exec(c))) {
    r = Number(m[1]); g = Number(m[2]); b = Number(m[3]);
  } else {
    return c;
  }
  return `rgba(${r}, ${g}, ${b}, ${alpha})`;
}

/** Call onChange when the theme changes: VS Code switches body classes; a standalone page follows the OS setting. */
export function watchTheme(onChange: (t: ThemeColors) => void, doc: Document = document): () => void {
  let last = '';
  const fire = () => {
    const t = readTheme(doc);
    const key = JSON.stringify(t);
    if (key !== last) { last = key; onChange(t); }
  };
  last = JSON.stringify(readTheme(doc));
  const obs = new MutationObserver(fire);
  // VS Code switches the body's classes and rewrites the --vscode-* variables in <html>'s style; watch both.
  if (doc.body) obs.observe(doc.body, { attributes: true, attributeFilter: ['class', 'data-vscode-theme-kind', 'style'] });
  obs.observe(doc.documentElement, { attributes: true, attributeFilter: ['style', 'class'] });
  const view = doc.defaultView;
  const queries = view?.matchMedia
    ? ['(prefers-color-scheme: dark)', '(forced-colors: active)', '(prefers-contrast: more)'].map(q => view.matchMedia(q))
    : [];
  for (const q of queries) q.addEventListener?.('change', fire);
  return () => {
    obs.disconnect();
    for (const q of queries) q.removeEventListener?.('change', fire);
  };
}
