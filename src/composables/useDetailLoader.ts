import { ref, watch, type Ref } from 'vue';
import { problemText } from '../views/crew/readiness-api';

/**
 * The details behind an id (a drawer's record): loads whenever the id changes to a value, keeps only
 * the answer for the newest id, and exposes the loading / ready / error state and a retry.
 */
export function useDetailLoader<T>(id: () => string | null, fetch: (id: string) => Promise<T>) {
  const detail = ref<T | null>(null) as Ref<T | null>;
  const state = ref<'loading' | 'ready' | 'error'>('loading');
  const errorText = ref('');
  let request = 0;

  async function load(which: string) {
    const mine = ++request;
    state.value = 'loading';
    detail.value = null;
    try {
      const result = await fetch(which);
      if (mine !== request) return;
      detail.value = result;
      state.value = 'ready';
    } catch (error) {
      if (mine !== request) return;
      errorText.value = problemText(error);
      state.value = 'error';
    }
  }
  watch(id, (which) => {
    if (which) void load(which);
  }, { immediate: true });

  /** Loads the current id again (the error panel's "Try again"). */
  const retry = () => {
    const which = id();
    if (which) void load(which);
  };
  return { detail, state, errorText, retry };
}
