/**
 * Review of a buildup interpretation, in the house vocabulary:
 * Draft → Out for review → Needs rework | Signed off; Needs rework → Draft
 * (by editing) → Out for review again; Signed off → Draft (reopened by a
 * reviewer or admin, with a reason).
 */
import { z } from 'zod';
import { safeText } from './text';
import type { BuildupGeometry, VelocityModel } from '../editor/model';

export const REVIEW_STATES = ['draft', 'out_for_review', 'needs_rework', 'signed_off'] as const;
export type ReviewState = (typeof REVIEW_STATES)[number];

export const REVIEW_STATE_LABELS: Record<ReviewState, string> = {
  draft: 'Draft',
  out_for_review: 'Out for review',
  needs_rework: 'Needs rework',
  signed_off: 'Signed off',
};

/**
 * Who may take a transition through `POST /api/buildups/:id/review`:
 * - `editor`: interpreters who are project members, and admins (the same rule as editing);
 * - `reviewer`: reviewers who are project members, and admins.
 */
export type ReviewActorKind = 'editor' | 'reviewer';

export interface ReviewTransitionRule {
  from: ReviewState;
  to: ReviewState;
  /** Button text in the review bar. */
  label: string;
  who: ReviewActorKind;
  /** Authors (the creator, anyone who saved a version) may not take it: 403 `own_work`. */
  notByAuthor?: boolean;
  /** A reason is required (`reason`), otherwise a comment is optional (`comment`). */
  reasonRequired?: boolean;
}

/** The transitions a person asks for. The only table: the server enforces it, the client shows buttons from it. */
export const REVIEW_TRANSITIONS: readonly ReviewTransitionRule[] = [
  { from: 'draft', to: 'out_for_review', label: 'Send for review', who: 'editor' },
  { from: 'out_for_review', to: 'needs_rework', label: 'Ask for rework', who: 'reviewer' },
  { from: 'out_for_review', to: 'signed_off', label: 'Sign off', who: 'reviewer', notByAuthor: true },
  { from: 'signed_off', to: 'draft', label: 'Reopen', who: 'reviewer', reasonRequired: true },
];

/** States a save returns to Draft (recorded in the history as a transition by the saver). A signed-off buildup refuses saves. */
export const RETURNS_TO_DRAFT_ON_SAVE: readonly ReviewState[] = ['out_for_review', 'needs_rework'];

export function findTransition(from: ReviewState, to: ReviewState): ReviewTransitionRule | undefined {
  return REVIEW_TRANSITIONS.find((t) => t.from === from && t.to === to);
}

/** Whether an account of global `role` (assumed a project member, or an admin) is the kind the rule asks for. */
export function roleMayTake(rule: ReviewTransitionRule, role: string): boolean {
  if (role === 'admin') return true;
  return rule.who === 'editor' ? role === 'interpreter' : role === 'reviewer';
}

/** The transitions to offer a member with `role` on a buildup in `state` (`isAuthor`: created it or saved a version). */
export function allowedTransitions(state: ReviewState, role: string, isAuthor: boolean): ReviewTransitionRule[] {
  return REVIEW_TRANSITIONS.filter((t) => t.from === state && roleMayTake(t, role) && !(t.notByAuthor && isAuthor));
}

export const REVIEW_COMMENT_MAX = 2000;

const reviewText = () => safeText({ multiline: true }).trim().max(REVIEW_COMMENT_MAX, `must be at most ${REVIEW_COMMENT_MAX} characters`).optional();

const stateEnum = z.enum(REVIEW_STATES, { error: `must be one of ${REVIEW_STATES.join(', ')}` });

/** `POST /api/buildups/:id/review`: the state asked for, the state the asker saw, an optional comment (a reason to reopen). */
export const reviewTransitionSchema = z.object({
  to: stateEnum,
  from: stateEnum,
  comment: reviewText(),
  reason: reviewText(),
});
export type ReviewTransitionInput = z.infer<typeof reviewTransitionSchema>;

export interface UserRef {
  id: number;
  name: string;
}

/** One line of the review history. */
export interface ReviewHistoryItem {
  id: number;
  from: ReviewState;
  to: ReviewState;
  /** The buildup version the transition concerned. */
  version: number;
  by: UserRef | null;
  at: string;
  comment: string | null;
  /** True when a save made it (Needs rework / Out for review → Draft). */
  bySave: boolean;
}

/** `GET /api/buildups/:id/review` */
export interface ReviewInfo {
  buildupId: number;
  sectionId: number;
  name: string;
  state: ReviewState;
  version: number;
  /**
   * The current sign-off. `savedVersion`: the last version saved by a person up
   * to the signed-off one; the versions after it up to `version` were kept at
   * sign-off with the same geometry (equal to `version` when none was kept).
   */
  signedOff: { version: number; savedVersion: number; by: UserRef | null; at: string } | null;
  /** Creator and everyone who saved a version. */
  authors: UserRef[];
  /** Transitions the asker may take now (from the shared table, own-work rule applied). */
  allowed: { to: ReviewState; label: string; reasonRequired: boolean }[];
  history: ReviewHistoryItem[];
}

/** A row of `GET /api/buildups/:id/versions` (newest first). */
export interface BuildupVersionSummary {
  version: number;
  name: string;
  savedBy: UserRef | null;
  savedAt: string;
  cycleCount: number;
  calibrationVersion: number | null;
  signedOff: boolean;
  /** Why it was kept when not by a save (e.g. at sign-off, for a changed velocity model or Ties); null for a save. */
  note: string | null;
}

/** `GET /api/buildups/:id/versions/:version`: everything the version was measured from. */
export interface BuildupVersionDetail extends BuildupVersionSummary {
  buildupId: number;
  geometry: BuildupGeometry;
  /** The section's velocity model when saved (null: the house default applied). */
  velocity: VelocityModel | null;
  verticalDomain: 'twt_ms' | 'depth_m';
}
