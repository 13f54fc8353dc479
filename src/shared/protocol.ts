// The one message protocol of Curvewright: host <-> webview panel, host <-> engine worker, and the CLI's pool <->
// its worker threads.
// Every message is a plain JSON-able object with a `type` discriminant. Requests carry an `id` and are
// answered by a message with `inReplyTo` = that id. The webview and both kinds of worker begin with a Ready
// handshake carrying PROTOCOL_VERSION; the host sends nothing to a webview before its 'ready'.
// The webview imports it as types plus the constants below, so this file must stay free of runtime imports of
// vscode, the engine or Node modules (src/shared; eslint.config.mjs enforces it).
import type { ErrorReport, GroupFit, JsonPath, ModelSpec, RunResult } from '../engine/report';

/** Bump when a message changes shape incompatibly; both ends compare it in the Ready handshake. */
export const PROTOCOL_VERSION = 1;

// ------------------------------------------------------------------ shared shapes

/** Theme kind as the webview should draw it (mirrors vscode.ColorThemeKind without importing vscode). */
export type ThemeKind = 'light' | 'dark' | 'high-contrast' | 'high-contrast-light';

/** Export formats the panel offers. */
export type ExportFormat = 'png' | 'svg' | 'csv' | 'json';

/** What the webview stores with `acquireVsCodeApi().setState(...)`, so the host's WebviewPanelSerializer can
 *  restore the panel after a window reload. The webview must set it when it receives a 'report'. */
export interface WebviewState {
  /** the spec the panel shows, by its path relative to the workspace (panels saved by 0.1.0: a URI string) */
  specUri: string;
  /** name of the model the user last selected, if any */
  selectedModel?: string;
}

// ------------------------------------------------------------------ host -> webview

/** A fresh run result for the panel's spec; sent after 'ready' and again after every refit (panel updates in place). */
export interface ReportMessage {
  type: 'report';
  report: RunResult;
  /** the spec file's path relative to the workspace (the webview keeps it to find its spec after a reload) */
  specUri: string;
  /** display name of the spec file: its path relative to the workspace, e.g. "assays/culture-b.fitspec.json" */
  specName: string;
  /** increases with every refit of this spec; the webview may ignore a report older than the one it shows */
  version: number;
  /** true when the report came from unsaved editor text */
  dirty?: boolean;
}

/** A fit is running (busy: true) or finished/cancelled (busy: false); message is a short human status. */
export interface BusyMessage {
  type: 'busy';
  busy: boolean;
  message?: string;
}

/** The colour theme changed: the webview re-reads its colours from the --vscode-* CSS variables and redraws. */
export interface ThemeMessage {
  type: 'theme';
  kind: ThemeKind;
}

/** Answer to an ExportRequest: the file written (null when the user cancelled the save dialog) or an error. */
export interface ExportResultMessage {
  type: 'exported';
  inReplyTo: number;
  path: string | null;
  error?: string;
}

/** Test hook: the host asks the webview to describe what it shows; answered by a 'snapshot' message. */
export interface SnapshotRequest {
  type: 'snapshot?';
  id: number;
}

export type HostToWebview = ReportMessage | BusyMessage | ThemeMessage | ExportResultMessage | SnapshotRequest;

// ------------------------------------------------------------------ webview -> host

/** Ready handshake: the webview's script has loaded and its message listener is installed. */
export interface ReadyMessage {
  type: 'ready';
  version: number;
}

/** The user clicked something that belongs to a place in the spec: select that JSON path in the spec editor. */
export interface RevealMessage {
  type: 'reveal';
  path: JsonPath;
  /** 1-based line (and column) in the spec text, when the place is known there (e.g. a JSON syntax error) */
  line?: number;
  column?: number;
}

/** The user clicked a data point or a problem tied to a CSV row: open the data file at that 1-based data row. */
export interface RevealRowMessage {
  type: 'revealRow';
  /** 1-based data row (first row after the header is 1) */
  row: number;
}

/** Save something from the panel. png: `data` is a data URL of the chart (image/png;base64).
 *  csv/json: `data` may carry the text to save; when omitted the host writes the model's results (csv: one row per
 *  parameter; json: the serialized report). Answered by an ExportResultMessage. */
export interface ExportRequest {
  type: 'export';
  id: number;
  format: ExportFormat;
  data?: string;
  /** model the export concerns (default: the whole report / best model) */
  model?: string;
  /** suggested file name without folder, e.g. "culture-b-logistic.png" */
  suggestedName?: string;
}

/** Ask the host to refit now (e.g. a "Refit" button). */
export interface RefitRequest {
  type: 'refit';
}

/** Forward a message from the webview to the host's "Curvewright" output channel (e.g. a render error). */
export interface LogMessage {
  type: 'log';
  level: 'info' | 'warn' | 'error';
  message: string;
}

/** Answer to a SnapshotRequest, used by integration tests to check what the panel shows. */
export interface SnapshotMessage {
  type: 'snapshot';
  inReplyTo: number;
  /** version of the report shown, or null when none yet */
  version: number | null;
  /** number of <canvas> elements drawn */
  canvases: number;
  /** visible text of the panel (trimmed, may be shortened) */
  text: string;
}

export type WebviewToHost =
  | ReadyMessage
  | RevealMessage
  | RevealRowMessage
  | ExportRequest
  | RefitRequest
  | LogMessage
  | SnapshotMessage;

// ------------------------------------------------------------------ host -> worker

/** Run one spec. specText is the live editor text (may be unsaved); without it the worker reads specPath. */
export interface RunRequest {
  type: 'run';
  id: number;
  /** absolute file-system path of the spec */
  specPath: string;
  specText?: string;
  /** absolute path of the workspace folder (outputs must stay inside it) */
  workspaceRoot?: string;
  /** also write the spec's `output` results file after a successful run (engine's writeResults) */
  writeResults?: boolean;
  /** the user allowed files outside the workspace for this workspace (trusted workspaces only; src/host/trust.ts) */
  trustPaths?: boolean;
  /** the advice boundary errors give (how to lift the boundary in the editor) */
  trustHint?: string;
}

/** Stop run `id` as soon as possible (the engine polls shouldStop); answered by a 'result' whose models end 'cancelled', or a 'cancelled'. */
export interface CancelRequest {
  type: 'cancel';
  id: number;
}

/** Read a CSV's header and first rows and propose x, y and candidate models (engine's suggestSpec), off the host thread. */
export interface SuggestRequest {
  type: 'suggest';
  id: number;
  /** absolute file-system path of the CSV */
  csvPath: string;
}

export type HostToWorker = RunRequest | CancelRequest | SuggestRequest;

// ------------------------------------------------------------------ worker -> host

/** Ready handshake: the worker thread has loaded the engine. */
export interface WorkerReadyMessage {
  type: 'ready';
  version: number;
}

/** The result of run `inReplyTo` (a FitReport or an ErrorReport). written = path of the results file written, if any.
 *  For large data (above 2000 rows) each model's `points` arrays are Float64Array (row: Int32Array) whose buffers are
 *  transferred; they reach the webview as typed arrays too. */
export interface WorkerResultMessage {
  type: 'result';
  inReplyTo: number;
  result: RunResult;
  written?: string | null;
  /** message when writing the results file failed (the fit itself succeeded) */
  writeError?: string;
  /** milliseconds the run took inside the worker */
  ms?: number;
}

/** A short progress note for run `inReplyTo` (e.g. "fitting model 2 of 4: logistic4"). */
export interface WorkerProgressMessage {
  type: 'progress';
  inReplyTo: number;
  message: string;
}

/** Run `inReplyTo` was cancelled before it produced a result. */
export interface WorkerCancelledMessage {
  type: 'cancelled';
  inReplyTo: number;
}

/** The engine threw unexpectedly for run `inReplyTo` (a bug, not a user error); message is for the log. */
export interface WorkerFailureMessage {
  type: 'failure';
  inReplyTo: number;
  message: string;
}

/** Answer to a SuggestRequest: the engine's suggestion, or a user-facing error message (unreadable CSV, ...). */
export interface WorkerSuggestionMessage {
  type: 'suggestion';
  inReplyTo: number;
  suggestion?: SpecSuggestion;
  error?: string;
}

/** What suggestSpec (src/engine/starter.ts) returns: columns, proposed x and y, and candidate models. */
export interface SpecSuggestion {
  columns: string[];
  x: string;
  y: string;
  candidates: { id: string; label: string; recommended: boolean; model: ModelSpec }[];
  /** "," for a semicolon file with decimal commas */
  decimal?: ',';
}

/** Data shared with each worker at start (workerData): cancel[0] holds the id of a run to stop. The host sets it with
 *  Atomics.store so a run busy in a synchronous solver loop sees the cancel through shouldStop() without waiting
 *  for its event loop to deliver the 'cancel' message. */
export interface WorkerInit {
  cancel: SharedArrayBuffer;
}

export type WorkerToHost =
  | WorkerSuggestionMessage
  | WorkerReadyMessage
  | WorkerResultMessage
  | WorkerProgressMessage
  | WorkerCancelledMessage
  | WorkerFailureMessage;

// ------------------------------------------------------------------ CLI pool: main thread <-> its worker threads

/** A CLI worker's Ready handshake (src/cli/pool.ts): sent once at start; the pool feeds it jobs only after this. */
export interface CliWorkerReadyMessage {
  type: 'ready';
  version: number;
}

/** Run the spec at specPath (absolute or cwd-relative) with outputs confined to workspaceRoot. */
export interface CliJobRequest {
  type: 'job';
  id: number;
  specPath: string;
  workspaceRoot: string;
  /** `--trust-paths`: the spec may read and write outside workspaceRoot */
  trustPaths?: boolean;
}

/** The RunResult of job `inReplyTo`. */
export interface CliJobResultMessage {
  type: 'result';
  inReplyTo: number;
  result: RunResult;
}

/** The engine threw for job `inReplyTo` (a bug, not a user error): the stack for the CLI's internal-error message. */
export interface CliJobFailureMessage {
  type: 'failure';
  inReplyTo: number;
  message: string;
}

/** Fit the groups at `groups` (positions in the groups' order) of a spec with data.groupBy: one spec over the pool. */
export interface CliGroupsRequest {
  type: 'groups';
  id: number;
  specPath: string;
  workspaceRoot: string;
  trustPaths?: boolean;
  groups: number[];
}

/** The fits of the groups of request `inReplyTo`, in the order asked, or the ErrorReport the spec gives. */
export interface CliGroupsResultMessage {
  type: 'groups-result';
  inReplyTo: number;
  result: GroupFit[] | ErrorReport;
}

export type CliPoolToWorker = CliJobRequest | CliGroupsRequest;
export type CliWorkerToPool = CliWorkerReadyMessage | CliJobResultMessage | CliGroupsResultMessage | CliJobFailureMessage;

// ------------------------------------------------------------------ webview HTML shell

/** The element id the host's HTML gives the webview to render into: `<div id="curvewright-root"></div>`.
 *  The host loads dist/webview.js (with a CSP nonce) and, when present, media/panel.css. The CSP allows
 *  scripts only by nonce, styles from the extension and inline style attributes, images from the extension,
 *  data: and blob:. No network. */
export const WEBVIEW_ROOT_ID = 'curvewright-root';
