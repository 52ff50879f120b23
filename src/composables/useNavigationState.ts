import { readonly, ref } from 'vue';
import type { Router } from 'vue-router';

const navigating = ref(false);
const failure = ref<string | null>(null);
let installed = false;

/** Tracks route changes so the shell can show progress and a designed error when a page fails to load. */
export function installNavigationState(router: Router): void {
  if (installed) return;
  installed = true;
  router.beforeEach(() => {
    navigating.value = true;
    failure.value = null;
  });
  router.afterEach(() => {
    navigating.value = false;
  });
  router.onError((error: unknown) => {
    navigating.value = false;
    // A lazy chunk that fails to load is usually a new release or a dropped connection.
    failure.value =
      error instanceof Error && /dynamically imported module|Importing a module script failed|fetch/i.test(error.message)
        ? 'This page could not be downloaded. Your connection may have dropped, or Plumewright was just updated.'
        : 'Something went wrong while opening this page.';
  });
}

export function useNavigationState() {
  return {
    navigating: readonly(navigating),
    failure: readonly(failure),
    clearFailure: () => {
      failure.value = null;
    },
  };
}
