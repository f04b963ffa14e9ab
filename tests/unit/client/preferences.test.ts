/**
 * The length-unit preference: a choice the person makes wins over a load of
 * the stored preference that was already on its way (sign-in, reload), and
 * over an earlier choice whose save answers late; a refused save puts the
 * previous unit back.
 */
import { createPinia, setActivePinia } from 'pinia';
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { nextTick } from 'vue';

type Prefs = { lengthUnit: 'm' | 'ft' };
interface Held {
  resolve: (p: Prefs) => void;
  reject: (e: Error) => void;
}
const gets: Held[] = [];
const puts: (Held & { body: Prefs })[] = [];

vi.mock('../../../client/api/register', () => ({
  getPreferences: () => new Promise<Prefs>((resolve, reject) => gets.push({ resolve, reject })),
  putPreferences: (body: Prefs) => new Promise<Prefs>((resolve, reject) => puts.push({ resolve, reject, body })),
}));

import { useSessionStore } from '../../../client/stores/session';
import { usePreferencesStore } from '../../../client/stores/preferences';

const settle = async () => {
  for (let i = 0; i < 4; i++) {
    await new Promise((r) => setTimeout(r, 0));
    await nextTick();
  }
};

function signedIn() {
  setActivePinia(createPinia());
  const session = useSessionStore();
  session.$patch({ user: { id: 7, name: 'Ilse Varn', email: 'ilse@tessel.example', role: 'interpreter' } as never });
  const prefs = usePreferencesStore();
  return { session, prefs };
}

/** Signed in, with the stored preference (metres) already arrived. */
async function loadedInMetres() {
  const { prefs } = signedIn();
  await settle();
  gets[0]!.resolve({ lengthUnit: 'm' });
  await settle();
  return prefs;
}

beforeEach(() => {
  gets.length = 0;
  puts.length = 0;
  const store = new Map<string, string>();
  vi.stubGlobal('localStorage', {
    getItem: (k: string) => store.get(k) ?? null,
    setItem: (k: string, v: string) => void store.set(k, String(v)),
    removeItem: (k: string) => void store.delete(k),
  });
});
afterEach(() => vi.unstubAllGlobals());

describe('length-unit preference', () => {
  it('the stored preference arrives and is shown', async () => {
    const { prefs } = signedIn();
    await settle();
    expect(gets).toHaveLength(1);
    gets[0]!.resolve({ lengthUnit: 'ft' });
    await settle();
    expect(prefs.lengthUnit).toBe('ft');
  });

  it('a choice made while the load is on its way is not undone by the load answering late', async () => {
    const { prefs } = signedIn();
    await settle();
    expect(gets).toHaveLength(1);
    const saved = prefs.setLengthUnit('ft');
    expect(prefs.lengthUnit).toBe('ft'); // shown at once
    puts[0]!.resolve({ lengthUnit: 'ft' });
    await saved;
    gets[0]!.resolve({ lengthUnit: 'm' }); // read before the save, answered after it
    await settle();
    expect(prefs.lengthUnit).toBe('ft');
  });

  it('an earlier choice answering after a later one does not win', async () => {
    const prefs = await loadedInMetres();
    const first = prefs.setLengthUnit('ft');
    const second = prefs.setLengthUnit('m');
    puts[1]!.resolve({ lengthUnit: 'm' });
    await second;
    puts[0]!.resolve({ lengthUnit: 'ft' });
    await first;
    expect(prefs.lengthUnit).toBe('m');
  });

  it('a refused save puts the previous unit back and says so to the caller', async () => {
    const prefs = await loadedInMetres();
    const saved = prefs.setLengthUnit('ft');
    expect(prefs.lengthUnit).toBe('ft');
    puts[0]!.reject(new Error('offline'));
    await expect(saved).rejects.toThrow('offline');
    expect(prefs.lengthUnit).toBe('m');
  });
});
