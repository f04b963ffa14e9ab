import { onScopeDispose, readonly, ref, watch, type Ref } from 'vue';

/** A read-only copy of `source` that follows it after `delay` ms of quiet. */
export function useDebouncedRef<T>(source: Ref<T>, delay = 300): Readonly<Ref<T>> {
  const out = ref(source.value) as Ref<T>;
  let timer: ReturnType<typeof setTimeout> | undefined;
  watch(source, (v) => {
    clearTimeout(timer);
    timer = setTimeout(() => {
      out.value = v;
    }, delay);
  });
  onScopeDispose(() => clearTimeout(timer));
  return readonly(out) as Readonly<Ref<T>>;
}
