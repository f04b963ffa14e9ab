/**
 * The depth view of a TWT section (issue #13): what `GET|POST
 * /api/sections/:id/depth` answer. The stored build's `basis` is the engine
 * depth context it was made with and `axis` its depth rows, so the browser
 * maps image pixels to depth-view pixels with exactly the conversion of the
 * tiles it shows (shared/depth-view createDepthViewMap).
 */
import type { DepthAxis, DepthViewBasis } from '../depth-view/index';
import type { TilesDescriptor } from './sections';

export type DepthViewStatus = 'none' | 'queued' | 'running' | 'ready' | 'failed';

export interface DepthViewBuild {
  build: number;
  tiles: TilesDescriptor;
  previewUrl: string;
  axis: DepthAxis;
  basis: DepthViewBasis;
  calibrationVersion: number | null;
  velocityAt: string | null;
}

export interface DepthViewState {
  sectionId: number;
  /** False for a section already in depth, one without tiles yet or without Ties (`unavailableReason` says which). */
  available: boolean;
  unavailableReason: string | null;
  /** `none` until someone asks for the depth view. */
  status: DepthViewStatus;
  /** 0–100 of the build in progress (100 when ready). */
  progress: number;
  failureReason: string | null;
  /** The shown build was made from an older calibration or velocity model (a newer one is queued, running or failed). */
  stale: boolean;
  /** The last good build (kept on view while a newer one is made), or null. */
  ready: DepthViewBuild | null;
}
