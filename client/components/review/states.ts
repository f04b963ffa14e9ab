/**
 * Look of the review states: Cayline's own house colours (shared/palette.ts
 * HOUSE_PALETTE): slate for Draft, the info blue for Out for review, coral for
 * Needs rework, lagoon for Signed off. Text colours chosen for a contrast
 * ratio ≥ 4.5 against their fill (WCAG 2.x; checked in tests/unit/review).
 */
import { HOUSE_PALETTE } from '../../../shared/palette';
import { REVIEW_STATE_LABELS, type ReviewState } from '../../../shared/schemas/review';

export interface StateLook {
  label: string;
  fill: string;
  text: string;
  border: string;
}

export const REVIEW_LOOK: Readonly<Record<ReviewState, StateLook>> = Object.freeze({
  draft: { label: REVIEW_STATE_LABELS.draft, fill: '#eef1f3', text: HOUSE_PALETTE.ink, border: '#c9d1d8' },
  out_for_review: { label: REVIEW_STATE_LABELS.out_for_review, fill: '#e3edf5', text: '#2c4f6b', border: HOUSE_PALETTE.info },
  needs_rework: { label: REVIEW_STATE_LABELS.needs_rework, fill: '#fbe6df', text: '#7a2e1a', border: HOUSE_PALETTE.coral },
  signed_off: { label: REVIEW_STATE_LABELS.signed_off, fill: '#dcf1ee', text: '#124a43', border: HOUSE_PALETTE.lagoon },
});

const dateFmt = new Intl.DateTimeFormat('en-GB', { day: 'numeric', month: 'short', year: 'numeric' });
const timeFmt = new Intl.DateTimeFormat('en-GB', { day: 'numeric', month: 'short', year: 'numeric', hour: '2-digit', minute: '2-digit' });

export const formatDay = (iso: string) => dateFmt.format(new Date(iso));
export const formatWhen = (iso: string) => timeFmt.format(new Date(iso));
