import { computed, ref } from 'vue';
import { ApiError } from '../../api/client';
import type { TypedAnswers } from '../drills/drills-api';
import { examsApi } from './exams-api';

export type SaveState = 'saved' | 'pending' | 'saving' | 'retrying' | 'refused' | 'closed';

const DEBOUNCE_MS = 600;
const RETRY_MS = 4000;

/**
 * Saves each question's answers as typed: a short pause after the last keystroke, one request at
 * a time, the newest text winning. A dropped connection keeps the text queued and retries; the
 * server answering 409 means the attempt has closed (time up or submitted elsewhere).
 */
export function useDraftSaver(attemptId: () => string, onClosed: (error: ApiError) => void) {
  const state = ref<SaveState>('saved');
  const savedAt = ref<Date | null>(null);
  const problem = ref('');
  const queue = new Map<number, TypedAnswers>();
  let debounce: ReturnType<typeof setTimeout> | undefined;
  let retry: ReturnType<typeof setTimeout> | undefined;
  let running: Promise<boolean> | null = null;

  function edit(questionIndex: number, answers: TypedAnswers) {
    if (state.value === 'closed') return;
    queue.set(questionIndex, { ...answers });
    if (state.value !== 'retrying') state.value = 'pending';
    clearTimeout(debounce);
    debounce = setTimeout(() => void flush(), DEBOUNCE_MS);
  }

  async function drain(): Promise<boolean> {
    while (queue.size) {
      const [index, answers] = queue.entries().next().value as [number, TypedAnswers];
      queue.delete(index);
      state.value = 'saving';
      try {
        const res = await examsApi.saveDraft(attemptId(), index, answers);
        savedAt.value = new Date(res.saved.savedAt);
        problem.value = '';
      } catch (error) {
        // Newer text typed meanwhile wins; otherwise this text goes back in the queue.
        if (!queue.has(index)) queue.set(index, answers);
        if (error instanceof ApiError && error.status === 409) {
          state.value = 'closed';
          queue.clear();
          onClosed(error);
          return false;
        }
        if (error instanceof ApiError && error.status === 400) {
          state.value = 'refused';
          problem.value = error.message;
          return false;
        }
        state.value = 'retrying';
        problem.value = error instanceof ApiError ? error.message : 'The connection dropped.';
        clearTimeout(retry);
        retry = setTimeout(() => void flush(), RETRY_MS);
        return false;
      }
    }
    state.value = 'saved';
    return true;
  }

  /** Sends everything queued now; true when all of it reached the server. */
  async function flush(): Promise<boolean> {
    clearTimeout(debounce);
    clearTimeout(retry);
    if (state.value === 'closed') return false;
    while (running) await running;
    if (!queue.size) return state.value === 'saved';
    running = drain();
    try {
      return await running;
    } finally {
      running = null;
    }
  }

  function stop() {
    clearTimeout(debounce);
    clearTimeout(retry);
  }

  const unsaved = computed(() => state.value !== 'saved');
  return { state, savedAt, problem, unsaved, edit, flush, stop, markClosed: () => (state.value = 'closed') };
}
