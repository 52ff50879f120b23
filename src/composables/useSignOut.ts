import { ref } from 'vue';
import { useRouter } from 'vue-router';
import { useSessionStore } from '../stores/session';

/** Signing out always lands on the sign-in page, even if the server could not be told. */
export function useSignOut() {
  const session = useSessionStore();
  const router = useRouter();
  const signingOut = ref(false);

  async function signOut() {
    signingOut.value = true;
    try {
      await session.signOut();
    } catch {
      // The local session is already cleared; the server session will expire on its own.
    } finally {
      signingOut.value = false;
      await router.push({ name: 'sign-in' });
    }
  }

  return { signOut, signingOut };
}
