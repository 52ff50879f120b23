import { defineStore } from 'pinia';
import { computed, ref } from 'vue';
import { ApiError, refreshCsrf } from '../api/client';
import { authApi, ROLES, type Membership, type Role, type SessionSnapshot, type SessionUser } from '../api/auth';

export type SessionStatus = 'unknown' | 'loading' | 'signed-in' | 'signed-out';

export const useSessionStore = defineStore('session', () => {
  const status = ref<SessionStatus>('unknown');
  const user = ref<SessionUser | null>(null);
  const memberships = ref<Membership[]>([]);
  const activeCompanyId = ref<string | null>(null);
  /** Set when the last session check failed because the service was down, not because nobody is signed in. */
  const serviceProblem = ref<string | null>(null);
  let loading: Promise<void> | null = null;

  const isSignedIn = computed(() => status.value === 'signed-in');
  const activeMembership = computed<Membership | null>(
    () => memberships.value.find((m) => m.companyId === activeCompanyId.value) ?? null,
  );
  const roles = computed<Role[]>(() => {
    const held = activeMembership.value?.roles ?? [];
    // Keep one canonical order so navigation and dashboards never shuffle between loads.
    return ROLES.filter((role) => held.includes(role));
  });
  const hasRole = (role: Role) => roles.value.includes(role);

  function apply(snapshot: SessionSnapshot) {
    user.value = snapshot.user;
    memberships.value = snapshot.memberships ?? [];
    activeCompanyId.value = snapshot.activeCompanyId ?? snapshot.memberships?.[0]?.companyId ?? null;
    status.value = 'signed-in';
    serviceProblem.value = null;
  }

  function clear() {
    user.value = null;
    memberships.value = [];
    activeCompanyId.value = null;
    status.value = 'signed-out';
  }

  async function load(): Promise<void> {
    status.value = status.value === 'signed-in' ? 'signed-in' : 'loading';
    try {
      apply(await authApi.me());
    } catch (error) {
      clear();
      if (error instanceof ApiError && error.status === 401) {
        serviceProblem.value = null;
      } else {
        serviceProblem.value =
          error instanceof ApiError && error.isServiceProblem
            ? error.message
            : 'Your session could not be checked. Try again in a moment.';
      }
    }
  }

  /** Loads the session the first time it is needed; later calls reuse that answer. */
  function ensureLoaded(): Promise<void> {
    if (!loading) loading = load();
    return loading;
  }

  async function signIn(email: string, password: string): Promise<void> {
    const snapshot = await authApi.login(email, password);
    // Sign-in regenerates the server session, which invalidates the old form token.
    refreshCsrf();
    apply(snapshot);
    loading = Promise.resolve();
  }

  async function signOut(): Promise<void> {
    try {
      await authApi.logout();
    } finally {
      refreshCsrf();
      clear();
      loading = Promise.resolve();
    }
  }

  /** The server said 401 on some call: the session ended elsewhere (expiry, sign-out in another tab). */
  function markSignedOut() {
    refreshCsrf();
    clear();
    loading = Promise.resolve();
  }

  async function switchCompany(companyId: string): Promise<void> {
    apply(await authApi.switchCompany(companyId));
  }

  async function retry(): Promise<void> {
    loading = load();
    return loading;
  }

  return {
    status,
    user,
    memberships,
    activeCompanyId,
    serviceProblem,
    isSignedIn,
    activeMembership,
    roles,
    hasRole,
    load,
    ensureLoaded,
    signIn,
    signOut,
    markSignedOut,
    switchCompany,
    retry,
  };
});
