// The calibration read-outs card of the panel: unknowns read off the curve, spiked controls and back-calculated
// standards, limits of detection, relative potency — each as the report holds it (docs/calibration.md). It only
// formats numbers (src/shared/numberFormat.ts); the HTML report prints the same tables statically (src/shared/html.ts).
import type { FitReport, ReadoutFlag } from '../src/engine/report';
import { MISSING, fmtInterval, fmtNum } from '../src/shared/numberFormat';
import { h, type Child } from './dom';
import { th } from './tables';

const n4 = (v: number | null | undefined) => fmtNum(v, 4);
const iv = (i: readonly (number | null)[] | null | undefined) => fmtInterval(i, n4);
const verdict = (pass: boolean | null) =>
  pass === null ? MISSING : pass ? h('span', { class: 'cw-ok-text' }, '\u2714 pass') : h('span', { class: 'cw-bad-text' }, '\u2716 fail');
const flagText = (flags: ReadoutFlag[]) => flags.map(f => f.message).join(' ');

function table(caption: string, head: [string, ('l' | undefined)?][], rows: Child[][]): HTMLElement {
  return h('div', { class: 'cw-table-wrap' }, h('table', { class: 'cw-table', 'aria-label': caption },
    h('thead', null, h('tr', null, head.map(([t, a]) => th(t, a)))),
    h('tbody', null, rows.map(r => h('tr', null, r.map((c, k) => h('td', head[k]?.[1] === 'l' ? null : { class: 'num' }, c)))))));
}

/** The read-outs card, or null when the report has no unknowns, controls, limits or potency. */
export function readoutsCard(r: FitReport): HTMLElement | null {
  if (!r.unknowns && !r.controls && !r.limits && !r.potency) return null;
  const conf = `${fmtNum(r.confidence * 100, 3)} %`;
  const parts: Child[] = [h('h2', { class: 'cw-h2' }, 'Read-outs')];
  const u = r.unknowns;
  if (u) {
    parts.push(h('h3', { class: 'cw-h3' }, `Unknowns \u2014 model ${u.model}; ${conf} intervals for the mean of m readings; value = x \u00d7 dilution`),
      table('Unknowns read off the curve', [['id', 'l'], ['m'], ['mean y'], ['x'], ['interval'], ['dilution'], ['value'], ['interval'], ['flags', 'l']],
        u.results.map(x => [x.id, String(x.m), n4(x.meanY), n4(x.x), iv(x.interval), n4(x.dilution), n4(x.value), iv(x.valueInterval), flagText(x.flags)])));
  }
  const c = r.controls;
  if (c) {
    if (c.results.length) {
      const acc = c.accept ? `; accept ${n4(c.accept[0])}\u2013${n4(c.accept[1])} %` : '';
      parts.push(h('h3', { class: 'cw-h3' }, `Controls \u2014 model ${c.model}${acc}: `, c.pass === null ? 'no verdict' : c.pass ? 'all passed' : 'FAILED'),
        table('Spiked controls', [['id', 'l'], ['m'], ['nominal'], ['value'], ['recovery %'], ['interval'], ['verdict', 'l'], ['flags', 'l']],
          c.results.map(x => [x.id, String(x.m), n4(x.nominal), n4(x.value), n4(x.recovery), iv(x.recoveryInterval), verdict(x.pass), flagText(x.flags)])));
    }
    const accS = c.acceptStandards ? ` (accept ${n4(c.acceptStandards[0])}\u2013${n4(c.acceptStandards[1])} %)` : '';
    parts.push(h('h3', { class: 'cw-h3' }, `Standards back-calculated${accS}`),
      table('Standards back-calculated', [['nominal x'], ['m'], ['mean y'], ['back-calculated'], ['interval'], ['recovery %'], ['verdict', 'l']],
        c.standards.map(x => [n4(x.x), String(x.m), n4(x.meanY), n4(x.back), iv(x.interval), n4(x.recovery), verdict(x.pass)])));
  }
  const l = r.limits;
  if (l) {
    parts.push(h('h3', { class: 'cw-h3' }, `Limits \u2014 model ${l.model}`),
      table('Limits of detection and quantitation', [['LOD'], ['LOQ'], ['detection limit (Hubaux\u2013Vos)'], ['\u03c3'], ['\u03c3 from', 'l']],
        [[n4(l.lod), n4(l.loq), n4(l.detection.x), n4(l.sigma.value), l.sigma.from === 'blanks' ? `${l.sigma.n} blank readings` : 'the residuals']]),
      h('p', { class: 'cw-muted' }, l.note));
  }
  const p = r.potency;
  if (p) {
    parts.push(h('h3', { class: 'cw-h3' }, `Relative potency against ${p.reference} \u2014 model ${p.model}; ${conf} Fieller intervals`),
      table('Relative potency and parallelism', [['test', 'l'], ['potency'], ['interval'], ['slope ratio'], ['interval'], ['span ratio'], ['interval'], ['parallelism', 'l']],
        p.results.map(x => {
          const q = x.parallelism;
          return [x.test, n4(x.ratio), iv(x.interval), q ? n4(q.slopeRatio.value) : MISSING, q ? iv(q.slopeRatio.interval) : MISSING,
            q ? n4(q.spanRatio.value) : MISSING, q ? iv(q.spanRatio.interval) : MISSING, q?.verdict ?? MISSING];
        })),
      h('p', { class: 'cw-muted' }, p.note));
  }
  return h('section', { class: 'cw-card cw-readouts' }, parts);
}
