/**
 * State of a searchable, paged server list (projects, users): the search box
 * (debounced; a new search goes back to page 1), the page and page size, the
 * query parameters to hand to a vue-query hook, and naive-ui's pagination
 * object with a "12 projects" style count.
 */
import { computed, reactive, ref, watch, type Ref } from 'vue';
import { useDebouncedRef } from './useDebouncedRef';

export function useRemoteList(opts: { noun: string; pageSize?: number; total: () => number }) {
  const search = ref('');
  const q = useDebouncedRef(search, 300);
  const paging = reactive({ page: 1, pageSize: opts.pageSize ?? 20 });
  watch(q, () => {
    paging.page = 1;
  });
  const params = computed(() => ({ q: q.value.trim() || undefined, page: paging.page, pageSize: paging.pageSize }));
  const pagination = computed(() => ({
    page: paging.page,
    pageSize: paging.pageSize,
    itemCount: opts.total(),
    showSizePicker: true,
    pageSizes: [10, 20, 50, 100],
    prefix: ({ itemCount }: { itemCount: number | undefined }) => `${itemCount ?? 0} ${opts.noun}${itemCount === 1 ? '' : 's'}`,
  }));
  function onPage(page: number): void {
    paging.page = page;
  }
  function onPageSize(size: number): void {
    paging.pageSize = size;
    paging.page = 1;
  }
  return { search, q: q as Ref<string>, paging, params, pagination, onPage, onPageSize };
}
