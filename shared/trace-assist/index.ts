/**
 * Trace assist (pure TypeScript, no DOM): least-cost paths along events,
 * auto-extend with termination proposals, snap to event, thinning.
 * Used by the Trace tool's Web Worker (client/canvas/assist/) and by tests.
 */
export * from './source';
export * from './cost';
export * from './path';
export * from './extend';
export * from './snap';
export * from './thin';
