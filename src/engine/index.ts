// A summary of the engine's public surface (pure TypeScript: no vscode, no DOM). The host, the worker and the CLI
// import the modules they need directly (so each bundle takes only what it uses: the host must not bundle papaparse);
// this file is for tests and readers.
export { runSpecFile, runSpec, writeResults, serializeReport, reportForFile, OutputError, sha256, RUN_SEED, MAX_POINTS_IN_FILE } from './run';
export { columnsNeeded } from './data';
export type { RunOptions, SerializeOptions } from './run';
export { suggestSpec, starterSpecText, classifyShape, candidatesFor } from './starter';
export type { Suggestion, Candidate, Shape } from './starter';
export * from './report';
