/**
 * Review of a buildup interpretation, in the house vocabulary:
 * Draft → Out for review → Needs rework | Signed off; Needs rework → Draft
 * (by editing) → Out for review again; Signed off → Draft (reopened by a
 * reviewer or admin, with a reason).
 */
export const REVIEW_STATES = ['draft', 'out_for_review', 'needs_rework', 'signed_off'] as const;
export type ReviewState = (typeof REVIEW_STATES)[number];

export const REVIEW_STATE_LABELS: Record<ReviewState, string> = {
  draft: 'Draft',
  out_for_review: 'Out for review',
  needs_rework: 'Needs rework',
  signed_off: 'Signed off',
};
