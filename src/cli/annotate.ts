// check's verdict in machine form: each failure (and warning) placed in a file at a line and column — the spec via
// the engine's JSON-path locator, a data file via the problem's own location — and printed as GitHub Actions
// workflow commands (::error file=…,line=…,col=…::message).
import * as path from 'path';
import type { CheckReason, FileLocation, JsonPath, ProblemCode, Severity } from '../engine/report';
import { locateNearest } from '../engine/spec/locate';

/** A failure or warning before it is placed: what check found, with the spec path or file location it has. */
export interface Finding {
  code: ProblemCode;
  severity: 'error' | 'warning';
  message: string;
  path?: JsonPath;
  location?: FileLocation;
}

/** check's severity of a problem: errors fail; warnings fail only with --strict; info never shows. */
export function findingSeverity(s: Severity, strict: boolean): 'error' | 'warning' | null {
  return s === 'error' ? 'error' : s === 'warning' ? (strict ? 'error' : 'warning') : null;
}

/**
 * Places findings of one spec: `specShown` is the spec's path relative to the current directory, `specText` its
 * text (null when it could not be read: then reasons name the file without a line).
 */
export function placeFindings(findings: Finding[], specShown: string, specText: string | null): CheckReason[] {
  return findings.map(f => {
    const r: CheckReason = { code: f.code, severity: f.severity, message: f.message, file: specShown };
    if (f.path && f.path.length) r.path = f.path;
    const loc = f.location;
    const inSpec = !loc || !loc.file || path.basename(loc.file) === path.basename(specShown);
    if (loc && !inSpec) {
      r.file = path.isAbsolute(loc.file) ? loc.file : path.posix.normalize(path.posix.join(path.posix.dirname(specShown), loc.file.split(path.sep).join('/')));
      if (loc.line !== undefined) r.line = loc.line;
      if (typeof loc.column === 'number') r.column = loc.column;
      return r;
    }
    if (loc && loc.line !== undefined) {
      r.line = loc.line;
      if (typeof loc.column === 'number') r.column = loc.column;
      return r;
    }
    if (specText !== null && f.path) {
      let at: ReturnType<typeof locateNearest> = null;
      try {
        at = locateNearest(specText, f.path);
      } catch {
        at = null;
      }
      if (at) {
        r.line = at.line;
        r.column = at.column;
      }
    }
    return r;
  });
}

// Escaping of workflow commands, as GitHub's runner decodes them (the rules of @actions/core, from memory):
// message data %, CR, LF; property values also ':' and ','.
// (src/shared/terminalText.ts, being written on another branch, may offer oneLine(); these rules are specific to
// workflow commands and stay here.)
export function escapeData(s: string): string {
  return s.replace(/%/g, '%25').replace(/\r/g, '%0D').replace(/\n/g, '%0A');
}

export function escapeProperty(s: string): string {
  return escapeData(s).replace(/:/g, '%3A').replace(/,/g, '%2C');
}

/** One workflow command per reason: ::error or ::warning with file, line, col and a title naming the code. */
export function githubAnnotations(reasons: CheckReason[]): string[] {
  return reasons.map(r => {
    const props = [`file=${escapeProperty(r.file)}`];
    if (r.line !== undefined) props.push(`line=${r.line}`);
    if (r.line !== undefined && r.column !== undefined) props.push(`col=${r.column}`);
    props.push(`title=${escapeProperty(`curvewright ${r.code}`)}`);
    return `::${r.severity} ${props.join(',')}::${escapeData(r.message)}`;
  });
}
