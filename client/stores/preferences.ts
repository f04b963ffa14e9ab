/**
 * One's display preferences (`/api/me/preferences`): the length unit, metres
 * or international feet. The engine works in metres; Readings, Ledger,
 * Ruler, register, reports and exports convert at display with
 * shared/units.ts. Kept in localStorage per person so the first paint after
 * a reload already uses it; the server's answer wins once it arrives.
 */
import { defineStore } from 'pinia';
import { ref, watch } from 'vue';
import { getPreferences, putPreferences } from '../api/register';
import { DEFAULT_LENGTH_UNIT, isLengthUnit, type LengthUnit } from '../../shared/units';
import { useSessionStore } from './session';

const key = (userId: number) => `cayline.lengthUnit.${userId}`;

export const usePreferencesStore = defineStore('preferences', () => {
  const session = useSessionStore();
  const lengthUnit = ref<LengthUnit>(DEFAULT_LENGTH_UNIT);
  const loadedFor = ref<number | null>(null);
  // bumped by every choice the person makes, so a load that was already on its
  // way (sign-in, reload) cannot put back the unit they have just changed
  let choices = 0;

  function fromStorage(userId: number) {
    try {
      const v = localStorage.getItem(key(userId));
      if (isLengthUnit(v)) lengthUnit.value = v;
    } catch {
      /* storage unavailable */
    }
  }

  async function load(): Promise<void> {
    const id = session.user?.id;
    if (!id) return;
    const seen = choices;
    if (seen === 0) fromStorage(id);
    try {
      const p = await getPreferences();
      if (seen !== choices || session.user?.id !== id) return;
      lengthUnit.value = p.lengthUnit;
      localStorage.setItem(key(id), p.lengthUnit);
      loadedFor.value = id;
    } catch {
      /* offline: keep what we had */
    }
  }

  async function setLengthUnit(unit: LengthUnit): Promise<void> {
    const before = lengthUnit.value;
    const mine = ++choices;
    lengthUnit.value = unit;
    try {
      const p = await putPreferences({ lengthUnit: unit });
      if (mine !== choices) return; // a later choice is on its way
      lengthUnit.value = p.lengthUnit;
      if (session.user) localStorage.setItem(key(session.user.id), p.lengthUnit);
    } catch (e) {
      if (mine === choices) lengthUnit.value = before;
      throw e;
    }
  }

  // (re)load whenever a different person signs in; back to metres when signed out
  watch(
    () => session.user?.id ?? null,
    (id) => {
      choices = 0;
      if (id === null) {
        lengthUnit.value = DEFAULT_LENGTH_UNIT;
        loadedFor.value = null;
      } else if (id !== loadedFor.value) void load();
    },
    { immediate: true },
  );

  return { lengthUnit, load, setLengthUnit };
});
