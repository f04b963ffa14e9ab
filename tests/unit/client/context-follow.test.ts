/**
 * The interpret page following a velocity model or Ties changed under it
 * (client/composables/useContextFollow.ts): a disagreement with the server
 * reads both again (once at a time); a change is told (who changed the
 * velocity model, unless it was the person) and the server check runs again.
 */
import { describe, expect, it, vi } from 'vitest';
import { nextTick, ref } from 'vue';
import { useContextFollow } from '../../../client/composables/useContextFollow';

const settle = async () => {
  await nextTick();
  await new Promise((r) => setTimeout(r, 5));
};

function setup() {
  const state = ref('confirmed');
  const velocity = ref<{ updatedAt: string | null; updatedBy: { id: number; name: string } | null } | null>({ updatedAt: '2026-12-05T09:00:00.000Z', updatedBy: { id: 2, name: 'Ivo Marlstone' } });
  const calibration = ref<number | null>(1);
  let release: () => void = () => {};
  const refetch = vi.fn(() => new Promise<void>((r) => (release = r)));
  const recheck = vi.fn();
  const notify = vi.fn();
  useContextFollow({ checkState: () => state.value, refetch, velocity: () => velocity.value, calibrationVersion: () => calibration.value, meId: () => 2, recheck, notify });
  return { state, velocity, calibration, refetch, recheck, notify, release: () => release() };
}

describe('useContextFollow', () => {
  it('reads the context again when the server disagrees, one read at a time', async () => {
    const s = setup();
    await settle();
    expect(s.refetch).not.toHaveBeenCalled();
    expect(s.recheck).not.toHaveBeenCalled(); // the first look changes nothing
    s.state.value = 'mismatch';
    await settle();
    expect(s.refetch).toHaveBeenCalledTimes(1);
    s.state.value = 'pending';
    await settle();
    s.state.value = 'mismatch';
    await settle();
    expect(s.refetch).toHaveBeenCalledTimes(1); // the first read still runs
    s.release();
    await settle();
    s.state.value = 'confirmed';
    await settle();
    s.state.value = 'mismatch';
    await settle();
    expect(s.refetch).toHaveBeenCalledTimes(2);
  });

  it('tells who changed the velocity model (not the person themselves) and the new Ties, and checks again', async () => {
    const s = setup();
    await settle();
    s.velocity.value = { updatedAt: '2026-12-05T09:05:00.000Z', updatedBy: { id: 1, name: 'Ada Quarry' } };
    await settle();
    expect(s.notify).toHaveBeenLastCalledWith('Ada Quarry changed the velocity model of this section; the Readings use it now.');
    expect(s.recheck).toHaveBeenCalledTimes(1);
    s.velocity.value = { updatedAt: '2026-12-05T09:06:00.000Z', updatedBy: { id: 2, name: 'Ivo Marlstone' } }; // saved in the drawer
    await settle();
    expect(s.notify).toHaveBeenCalledTimes(1);
    expect(s.recheck).toHaveBeenCalledTimes(2);
    s.velocity.value = { ...s.velocity.value }; // read again, unchanged
    await settle();
    expect(s.recheck).toHaveBeenCalledTimes(2);
    s.calibration.value = 2;
    await settle();
    expect(s.notify).toHaveBeenLastCalledWith('The Ties of this section changed (calibration v2); the Readings use them now.');
    expect(s.recheck).toHaveBeenCalledTimes(3);
  });
});
