/**
 * Growth forward model (measurement-spec §10): model, output in the engine's
 * format, depth → TWT, drowning threshold, fit and presets. Pure TypeScript
 * (no DOM, no Node-only APIs).
 */
export * from './model';
export * from './output';
export * from './threshold';
export * from './nelder-mead';
export * from './fit';
export * from './presets';
export { FORWARD_MODEL_LIMITS, forwardModelParamsSchema } from '../schemas/forward-model';
export type { ForwardModelParams, ForwardModelParamsInput } from '../schemas/forward-model';
