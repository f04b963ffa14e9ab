import { createPinia, setActivePinia } from 'pinia';
import { actions, type Action } from '../../../client/canvas/actions';
import type { EditorBuildup } from '../../../client/canvas/model';
import { storeEnv } from '../../../client/canvas/tools/storeEnv';
import type { ToolEnv, ToolPointer } from '../../../client/canvas/tools/types';
import { useInterpretationStore } from '../../../client/stores/interpretation';
import { deepFreeze, kestrel, marrow } from '../canvas/fixtures';

/** A real interpretation store loaded with the fixture buildups, and a ToolEnv that records every dispatched action. */
export function setup(buildups: EditorBuildup[] = [kestrel(), marrow()]) {
  setActivePinia(createPinia());
  const store = useInterpretationStore();
  store.dispatch(actions.replaceAll(deepFreeze(buildups)));
  const dispatched: Action[] = [];
  const base = storeEnv(store);
  const env: ToolEnv = {
    ...base,
    dispatch: (a) => {
      dispatched.push(a);
      return base.dispatch(a);
    },
  };
  return { store, env, dispatched, names: () => dispatched.map((a) => a.name) };
}

/** A pointer event at image point [u, v] and zoom `scale`. */
export const at = (u: number, v: number, scale = 1, mods: Partial<ToolPointer> = {}): ToolPointer => ({ image: [u, v], scale, ...mods });
