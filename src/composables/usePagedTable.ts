import type { DataTablePageEvent, DataTableSortEvent } from 'primevue/datatable';
import { onBeforeUnmount, onMounted, ref, watch } from 'vue';
import { problemText } from '../views/crew/readiness-api';

/** The paging (and, where the table sorts, sorting) state a server-side table keeps in its query. */
export interface PagedQuery {
  first: number;
  rows: number;
  search: string;
  sort?: string;
  order?: 'asc' | 'desc';
}

/**
 * A table paged, filtered and sorted on the server: loads on mount, starts again from the first page
 * when a filter changes (the search after a 300 ms pause), keeps only the newest answer when requests
 * overlap, and exposes the loading / ready / error state the page shows.
 */
export function usePagedTable<Q extends PagedQuery, R>(options: {
  query: Q;
  /** Asks the server for one page (1-based). */
  fetch: (page: number, pageSize: number) => Promise<R>;
  /** Keeps an answer; called only for the newest request. */
  apply: (result: R) => void;
  /** The filters other than the search: a change reloads from the first page. */
  filters: () => unknown[];
  /** The sort when the table clears its own (its column sorted neither way). */
  sortDefault?: { field: string; order: 'asc' | 'desc' };
}) {
  const { query: q } = options;
  const state = ref<'loading' | 'ready' | 'error'>('loading');
  const loading = ref(false);
  const errorText = ref('');

  let request = 0;
  async function load() {
    const mine = ++request;
    loading.value = true;
    try {
      const result = await options.fetch(Math.floor(q.first / q.rows) + 1, q.rows);
      if (mine !== request) return;
      options.apply(result);
      state.value = 'ready';
    } catch (error) {
      if (mine !== request) return;
      errorText.value = problemText(error);
      state.value = 'error';
    } finally {
      if (mine === request) loading.value = false;
    }
  }
  const fromFirstPage = () => {
    q.first = 0;
    void load();
  };

  onMounted(load);
  watch(options.filters, fromFirstPage);
  let timer: ReturnType<typeof setTimeout> | undefined;
  watch(() => q.search, () => {
    clearTimeout(timer);
    timer = setTimeout(fromFirstPage, 300);
  });
  onBeforeUnmount(() => clearTimeout(timer));

  function onPage(event: DataTablePageEvent) {
    q.first = event.first;
    q.rows = event.rows;
    void load();
  }
  function onSort(event: DataTableSortEvent) {
    const fallback = options.sortDefault ?? { field: q.sort ?? '', order: q.order ?? 'asc' };
    q.sort = (event.sortField as string | undefined) ?? fallback.field;
    q.order = event.sortOrder === 1 ? 'asc' : event.sortOrder === -1 ? 'desc' : fallback.order;
    fromFirstPage();
  }

  return { state, loading, errorText, load, onPage, onSort };
}
