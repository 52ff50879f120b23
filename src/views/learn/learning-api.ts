import { api } from '../../api/client';

/** Response shapes of the learning routes (server/routes/learning.ts). */
export interface DrillLink {
  id: string;
  title: string;
}

export interface LessonProgress {
  status: 'not-started' | 'opened' | 'completed';
  openedAt: string | null;
  completedAt: string | null;
  /** The lesson changed after it was finished. */
  revisedSinceCompleted: boolean;
}

export interface CourseLesson {
  id: string;
  slug: string;
  title: string;
  order: number;
  minutes: number;
  methods: string[];
  drills: DrillLink[];
  progress: LessonProgress;
}

export interface CourseArea {
  id: string;
  name: string;
  summary: string;
  methods: string[];
  validityMonths: number;
  lessonCount: number;
  completedCount: number;
  openedCount: number;
  percent: number;
  minutes: number;
  lessons: CourseLesson[];
}

export interface LessonNeighbour {
  id: string;
  title: string;
}

export interface LessonPage {
  lesson: {
    id: string;
    areaId: string;
    areaName: string;
    slug: string;
    title: string;
    order: number;
    minutes: number;
    methods: string[];
    drills: DrillLink[];
    version: number;
    updatedAt: string;
    bodyHtml: string;
  };
  position: { index: number; total: number };
  prev: LessonNeighbour | null;
  next: LessonNeighbour | null;
  progress: LessonProgress;
}

export const learningApi = {
  courses: () => api.get<{ areas: CourseArea[] }>('/api/courses'),
  lesson: (lessonId: string) => api.get<LessonPage>(`/api/lessons/${encodeURIComponent(lessonId)}`),
  complete: (lessonId: string) =>
    api.post<{ progress: LessonProgress; version: number }>(`/api/lessons/${encodeURIComponent(lessonId)}/complete`),
};

/** The lesson a learner would pick up next: one they opened but didn't finish, else the first unread. */
export function nextLessonToRead(areas: CourseArea[]): { area: CourseArea; lesson: CourseLesson } | null {
  for (const status of ['opened', 'not-started'] as const) {
    for (const area of areas) {
      const lesson = area.lessons.find((l) => l.progress.status === status);
      if (lesson) return { area, lesson };
    }
  }
  return null;
}
