/**
 * useBuildupLoading: the interpret page's buildups come through the
 * `useBuildupList` query into the interpretation store once per section; the
 * `?buildup=` of a review link picks the selection; a refetch of the list
 * (another helper invalidating it) never replaces the working copy; another
 * section starts clean and tells the page (`onSwitch`).
 */
import { QueryClient, VueQueryPlugin } from '@tanstack/vue-query';
import { createPinia, setActivePinia } from 'pinia';
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { createApp, effectScope, nextTick, ref } from 'vue';

const query: Record<string, string> = {};
vi.mock('vue-router', () => ({ useRoute: () => ({ query }) }));

import { configureAuth } from '../../../client/api/http';
import { buildupKeys } from '../../../client/composables/useBuildups';
import { useBuildupLoading } from '../../../client/composables/useBuildupLoading';
import { useInterpretationStore } from '../../../client/stores/interpretation';

/** A stored buildup row as GET /api/sections/:id/buildups answers it (invented Tessel Basin names). */
const row = (id: number, name: string) => ({
  id,
  sectionId: 1,
  name,
  version: 1,
  reviewState: 'draft',
  updatedAt: '2026-01-01T00:00:00Z',
  geometry: { base: [[0, 500], [900, 520]], cycles: [], terminations: [], topIsDrowningSurface: false },
});

let calls: string[] = [];
function serve(bySection: Record<number, unknown[]>): void {
  vi.stubGlobal(
    'fetch',
    vi.fn(async (url: string) => {
      calls.push(url);
      const id = Number(/sections\/(\d+)\/buildups/.exec(url)?.[1]);
      return new Response(JSON.stringify(bySection[id] ?? []), { status: 200, headers: { 'content-type': 'application/json' } });
    }),
  );
}

const settle = async () => {
  for (let i = 0; i < 6; i++) {
    await new Promise((r) => setTimeout(r, 0));
    await nextTick();
  }
};

function mount(sectionId: ReturnType<typeof ref<number>>, canLoad = ref(true)) {
  const qc = new QueryClient();
  const app = createApp({ render: () => null });
  app.use(VueQueryPlugin, { queryClient: qc });
  setActivePinia(createPinia());
  const store = useInterpretationStore();
  const onSwitch = vi.fn();
  const scope = effectScope();
  const loading = app.runWithContext(() => scope.run(() => useBuildupLoading({ sectionId: () => sectionId.value!, canLoad: () => canLoad.value, store, onSwitch }))!);
  return { qc, store, onSwitch, loading, scope };
}

beforeEach(() => {
  calls = [];
  for (const k of Object.keys(query)) delete query[k];
  configureAuth({ getToken: () => 'tok', onUnauthorized: () => {} });
});
afterEach(() => vi.unstubAllGlobals());

describe('useBuildupLoading', () => {
  it('loads the section once into the store and selects the buildup a review link names', async () => {
    serve({ 1: [row(11, 'Kestrel Knoll'), row(12, 'Marrow Bank')] });
    query.buildup = '12';
    const m = mount(ref(1));
    expect(m.loading.loading.value).toBe(true);
    await settle();
    expect(m.store.buildups.map((b) => b.name)).toEqual(['Kestrel Knoll', 'Marrow Bank']);
    expect(m.store.buildupById(m.store.selection.buildupId!)?.serverId).toBe(12);
    expect(m.loading.loadedFor.value).toBe(1);
    expect(m.loading.loading.value).toBe(false);
    expect(calls).toEqual(['/api/sections/1/buildups']);
    m.scope.stop();
  });

  it('waits until the section can be loaded (ready and calibrated)', async () => {
    serve({ 1: [row(11, 'Kestrel Knoll')] });
    const canLoad = ref(false);
    const m = mount(ref(1), canLoad);
    await settle();
    expect(calls).toEqual([]);
    canLoad.value = true;
    await settle();
    expect(m.store.buildups).toHaveLength(1);
    m.scope.stop();
  });

  it('an invalidated list does not refetch over the working copy', async () => {
    serve({ 1: [row(11, 'Kestrel Knoll')] });
    const m = mount(ref(1));
    await settle();
    m.store.select(m.store.buildups[0].id);
    const working = m.store.buildups;
    await m.qc.invalidateQueries({ queryKey: buildupKeys.list(1) });
    await settle();
    expect(calls).toHaveLength(1);
    expect(m.store.buildups).toBe(working);
    m.scope.stop();
  });

  it('another section empties the store, calls onSwitch and loads the new list', async () => {
    serve({ 1: [row(11, 'Kestrel Knoll')], 2: [row(21, 'Marrow Bank')] });
    const id = ref(1);
    const m = mount(id);
    await settle();
    expect(m.onSwitch).not.toHaveBeenCalled();
    id.value = 2;
    await nextTick();
    expect(m.onSwitch).toHaveBeenCalledTimes(1);
    expect(m.loading.loadedFor.value).toBeNull();
    await settle();
    expect(m.store.buildups.map((b) => b.name)).toEqual(['Marrow Bank']);
    expect(m.loading.loadedFor.value).toBe(2);
    m.scope.stop();
  });

  it('a failed load says so and Try again fetches once more', async () => {
    let fail = true;
    vi.stubGlobal(
      'fetch',
      vi.fn(async () => {
        calls.push('x');
        return fail
          ? new Response(JSON.stringify({ code: 'database_unavailable', message: 'The database is not answering' }), { status: 503, headers: { 'content-type': 'application/json' } })
          : new Response(JSON.stringify([row(11, 'Kestrel Knoll')]), { status: 200, headers: { 'content-type': 'application/json' } });
      }),
    );
    const m = mount(ref(1));
    await settle();
    expect(m.loading.loadFailed.value).toBe('The database is not answering');
    expect(calls).toHaveLength(1); // not retried behind the person's back
    fail = false;
    m.loading.retry();
    await settle();
    expect(m.loading.loadFailed.value).toBeNull();
    expect(m.store.buildups).toHaveLength(1);
    m.scope.stop();
  });
});
