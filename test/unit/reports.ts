// Narrowing a RunResult in tests: a FitReport or an ErrorReport, failing the test with the message otherwise.
import * as assert from 'assert';
import { isErrorReport, type ErrorReport, type FitReport, type RunResult } from '../../src/engine/report';

export function asReport(r: RunResult): FitReport {
  if (isErrorReport(r)) assert.fail(`expected a FitReport, got an error: ${r.error.message}`);
  return r as FitReport;
}

export function asError(r: RunResult): ErrorReport {
  assert.ok(isErrorReport(r), 'expected an ErrorReport, got a FitReport');
  return r as ErrorReport;
}
