/**
 * The editor's plain records live in shared/ so the server converts stored
 * geometry the same way. The velocity model, Ties and points the client
 * handles are the shared zod schemas' own types (z.output of
 * `velocityModelSchema` / `tieSchema`), not hand-written copies; these named
 * exports take precedence over the same names from shared/editor/model.
 */
import type { TieInput, VelocityModelInput } from '../../shared/schemas/interpretation';

export * from '../../shared/editor/model';
export type VelocityModel = VelocityModelInput;
export type CalibrationTie = TieInput;
/** A point `[x, y]` (image pixels or section coordinates), as in a Tie. */
export type Pt = TieInput['px'];
