import { readonly, ref } from 'vue';
import { DARK_CLASS } from '../theme/preset';

const STORAGE_KEY = 'pw-color-scheme';
type Scheme = 'light' | 'dark';

const isDark = ref(false);

function storedScheme(): Scheme | null {
  try {
    const value = localStorage.getItem(STORAGE_KEY);
    return value === 'light' || value === 'dark' ? value : null;
  } catch {
    // Private browsing modes may refuse storage; the system preference still applies.
    return null;
  }
}

function apply(dark: boolean) {
  isDark.value = dark;
  document.documentElement.classList.toggle(DARK_CLASS, dark);
  document.documentElement.style.colorScheme = dark ? 'dark' : 'light';
}

/** Runs before the app mounts so the first paint already has the right scheme. */
export function applyInitialColorScheme(): void {
  const media = window.matchMedia?.('(prefers-color-scheme: dark)');
  apply(storedScheme() ? storedScheme() === 'dark' : Boolean(media?.matches));
  // Follow the system only until the person picks a scheme themselves.
  media?.addEventListener?.('change', (event) => {
    if (!storedScheme()) apply(event.matches);
  });
}

export function useColorScheme() {
  function setDark(dark: boolean) {
    apply(dark);
    try {
      localStorage.setItem(STORAGE_KEY, dark ? 'dark' : 'light');
    } catch {
      // Not remembered across visits, but the switch still works for this one.
    }
  }
  return { isDark: readonly(isDark), setDark, toggle: () => setDark(!isDark.value) };
}
