// Public API of the engine (pure TypeScript: no vscode, no DOM). Host, worker and CLI import from here.
export { runSpecFile, runSpec, writeResults, serializeReport, reportForFile, OutputError, sha256, RUN_SEED, MAX_POINTS_IN_FILE } from './run';
export { columnsNeeded } from './data';
export type { RunOptions, SerializeOptions } from './run';
export { suggestSpec, starterSpecText, classifyShape, candidatesFor } from './starter';
export type { Suggestion, Candidate, Shape } from './starter';
export * from './report';
