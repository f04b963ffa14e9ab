/**
 * The interpret page's Note pins and Discussion state: the section's threads,
 * where each pin sits now (an object pin follows its object in the editor as
 * it is dragged; the server keeps the last saved position), the selected
 * thread, the "place a Note pin" mode and the pending anchor of a new pin,
 * the filters of the Discussion panel, and `?thread=ID` from a link.
 *
 * Placing works for every member (reviewers and curators too): a click on a
 * Margin pin, Termination stamp or line of a buildup anchors the pin to that
 * object, anywhere else to the point of the image.
 */
import { computed, ref, watch, type Ref } from 'vue';
import { useRoute, useRouter } from 'vue-router';
import type { NoteThreadView, NoteAnchorInput } from '../../../shared/schemas/notes';
import { anchorPositionInEditor, describeObject, type NoteObjectKind } from '../../../shared/notes/anchor';
import type { EditorBuildup, Pt } from '../../canvas/model';
import type { StagePointerEvent } from '../../canvas/stageContext';
import { hitTest } from '../../canvas/tools/hitTest';
import { NOTE_PIN_KEY } from '../../canvas/tools/toolbox';
import type { ToolKey } from '../../canvas/tools/types';
import { useThreads } from '../../composables/useNotes';

export type DiscussionFilter = 'open' | 'resolved' | 'mine' | 'mentions';

export interface PinView {
  id: number;
  number: number;
  at: [number, number];
  resolved: boolean;
  removed: boolean;
}

export interface PendingPin {
  anchor: NoteAnchorInput;
  at: Pt;
  label: string;
}

interface Options {
  sectionId: () => number;
  buildups: () => readonly EditorBuildup[];
  meId: () => number | null;
  /** Centre the stage on an image point. */
  centerOn: (p: Pt) => void;
  /** Bring the Discussion panel forward. */
  show: () => void;
  imageSize: () => { width: number; height: number } | null;
}

/** Where an object-anchored thread's pin is now: the live editor object when it exists there, else the server's last position. */
export function livePosition(t: NoteThreadView, buildups: readonly EditorBuildup[]): { at: [number, number]; removed: boolean } {
  if (t.anchor.kind === 'object' && t.anchor.buildupId !== null && !t.objectRemoved) {
    const sid = t.anchor.buildupId;
    const b = buildups.find((x) => x.serverId === sid);
    if (b) {
      const p = anchorPositionInEditor(b, { object: t.anchor.object, cycleId: t.anchor.cycleId ?? undefined, terminationId: t.anchor.terminationId ?? undefined });
      if (p) return { at: [p[0], p[1]], removed: false };
    }
  }
  return { at: t.at, removed: t.objectRemoved };
}

/** A short description of a thread's anchor, e.g. "right Margin pin of cycle 1 · Kestrel Knoll". */
export function anchorLabel(t: NoteThreadView, buildups: readonly EditorBuildup[]): string {
  if (t.anchor.kind === 'point') return `point ${Math.round(t.at[0])}, ${Math.round(t.at[1])}`;
  const a = t.anchor;
  const b = buildups.find((x) => x.serverId === a.buildupId);
  const cycleNo = b && a.cycleId ? b.cycles.findIndex((c) => c.id === a.cycleId) + 1 : null;
  const what = describeObject({ object: a.object, cycleId: a.cycleId ?? undefined }, cycleNo || null);
  return a.buildupName ? `${what} · ${a.buildupName}` : what;
}

export function useDiscussion(o: Options) {
  const route = useRoute();
  const router = useRouter();
  const query = useThreads(o.sectionId);
  const threads = computed<NoteThreadView[]>(() => query.data.value ?? []);
  const selectedId = ref<number | null>(null);
  const placing = ref(false);
  const pending = ref<PendingPin | null>(null) as Ref<PendingPin | null>;
  const filter = ref<DiscussionFilter>('open');

  const pins = computed<PinView[]>(() =>
    threads.value.map((t) => {
      const p = livePosition(t, o.buildups());
      return { id: t.id, number: t.number, at: p.at, resolved: t.resolved, removed: p.removed };
    }),
  );

  const openCount = computed(() => threads.value.filter((t) => !t.resolved).length);

  function matches(t: NoteThreadView, f: DiscussionFilter): boolean {
    const me = o.meId();
    switch (f) {
      case 'open':
        return !t.resolved;
      case 'resolved':
        return t.resolved;
      case 'mine':
        return me !== null && (t.createdBy?.id === me || t.messages.some((m) => m.author?.id === me));
      case 'mentions':
        return me !== null && t.messages.some((m) => !m.deletedAt && m.mentions.some((p) => p.id === me));
    }
  }
  const counts = computed(() => ({
    open: threads.value.filter((t) => matches(t, 'open')).length,
    resolved: threads.value.filter((t) => matches(t, 'resolved')).length,
    mine: threads.value.filter((t) => matches(t, 'mine')).length,
    mentions: threads.value.filter((t) => matches(t, 'mentions')).length,
  }));
  const filtered = computed(() => threads.value.filter((t) => matches(t, filter.value)));
  const selected = computed(() => threads.value.find((t) => t.id === selectedId.value) ?? null);

  function choose(id: number | null, centre = true): void {
    selectedId.value = id;
    pending.value = null;
    if (id === null) {
      if (route.query.thread !== undefined) {
        const { thread: _gone, ...rest } = route.query;
        void router.replace({ query: rest });
      }
      return;
    }
    const pin = pins.value.find((p) => p.id === id);
    if (pin && centre) o.centerOn(pin.at);
    const t = threads.value.find((x) => x.id === id);
    // a thread chosen from a link or the canvas is shown even when the filter would hide it
    if (t && !matches(t, filter.value)) filter.value = t.resolved ? 'resolved' : 'open';
    o.show();
    if (String(route.query.thread ?? '') !== String(id)) void router.replace({ query: { ...route.query, thread: String(id) } });
  }

  // ?thread=ID: open that thread once the list is there
  let fromLink: number | null = null;
  watch(
    () => [route.query.thread, threads.value.length] as const,
    ([q]) => {
      const id = Number(q);
      if (!Number.isInteger(id) || id <= 0 || id === selectedId.value || id === fromLink) return;
      if (!threads.value.some((t) => t.id === id)) return;
      fromLink = id;
      // wait a frame so the stage has its size before centring
      requestAnimationFrame(() => choose(id));
    },
    { immediate: true },
  );

  function startPlacing(): void {
    placing.value = true;
    pending.value = null;
    o.show();
  }
  function cancel(): void {
    placing.value = false;
    pending.value = null;
  }

  /** A click on the stage: while placing, it sets the pending anchor and is used (true). */
  function click(e: StagePointerEvent, scale: number): boolean {
    if (!placing.value) return false;
    const size = o.imageSize();
    const buildups = o.buildups();
    const hit = hitTest({ buildups: buildups as EditorBuildup[] }, e.image, 10, scale);
    let anchor: NoteAnchorInput | null = null;
    let at: Pt = e.image;
    let label = '';
    if (hit) {
      const bid = hit.kind === 'margin' || hit.kind === 'termination' ? hit.buildupId : hit.target.buildupId;
      const b = buildups.find((x) => x.id === bid);
      if (b?.serverId !== undefined) {
        let object: NoteObjectKind = 'buildup';
        let cycleId: string | undefined;
        let terminationId: string | undefined;
        if (hit.kind === 'margin') {
          object = hit.side === 'left' ? 'marginLeft' : 'marginRight';
          cycleId = hit.cycleId;
        } else if (hit.kind === 'termination') {
          object = 'termination';
          terminationId = hit.terminationId;
        } else if (hit.target.kind !== 'base' && hit.target.cycleId) {
          object = hit.target.kind;
          cycleId = hit.target.cycleId;
        }
        const ref = { object, cycleId, terminationId };
        const p = anchorPositionInEditor(b, ref);
        if (p) {
          anchor = { kind: 'object', buildupId: b.serverId, object, ...(cycleId ? { cycleId } : {}), ...(terminationId ? { terminationId } : {}) };
          at = p;
          const cycleNo = cycleId ? b.cycles.findIndex((c) => c.id === cycleId) + 1 : null;
          label = `${describeObject(ref, cycleNo || null)} · ${b.name}`;
        }
      }
    }
    if (!anchor) {
      if (!e.inside || (size && (e.image[0] < 0 || e.image[1] < 0 || e.image[0] > size.width || e.image[1] > size.height))) return true; // off the image: ignored
      at = [Math.round(e.image[0] * 10) / 10, Math.round(e.image[1] * 10) / 10];
      anchor = { kind: 'point', at };
      label = `point ${Math.round(at[0])}, ${Math.round(at[1])}`;
    }
    pending.value = { anchor, at, label };
    placing.value = false;
    selectedId.value = null;
    o.show();
    return true;
  }

  /** K starts placing, Esc stops it. */
  function key(e: ToolKey): boolean {
    if (e.ctrl || e.meta || e.alt) return false;
    if (e.key.toLowerCase() === NOTE_PIN_KEY) {
      if (placing.value) cancel();
      else startPlacing();
      return true;
    }
    if (e.key === 'Escape' && (placing.value || pending.value)) {
      cancel();
      return true;
    }
    return false;
  }

  return { query, threads, pins, selected, selectedId, placing, pending, filter, filtered, counts, openCount, choose, startPlacing, cancel, click, key };
}

export type Discussion = ReturnType<typeof useDiscussion>;
