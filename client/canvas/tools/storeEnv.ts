/** A ToolEnv over the interpretation store (client/stores/interpretation.ts). */
import type { Action } from '../actions';
import type { EditorState, SelectedElement, Selection } from '../model';
import type { ToolEnv } from './types';

/** The parts of the interpretation store the tools use. */
export interface StoreLike {
  doc: { state: EditorState };
  selection: Selection;
  dispatch(a: Action): boolean;
  select(buildupId: string | null, cycleId?: string | null, element?: SelectedElement | null): void;
  endGesture(): void;
}

export function storeEnv(store: StoreLike, opts: { radiusPx?: number } = {}): ToolEnv {
  return {
    state: () => store.doc.state,
    selection: () => store.selection,
    dispatch: (a) => store.dispatch(a),
    select: (b, c = null, el = null) => store.select(b, c, el),
    endGesture: () => store.endGesture(),
    ...(opts.radiusPx !== undefined ? { radiusPx: opts.radiusPx } : {}),
  };
}
