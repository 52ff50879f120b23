import type { AssignmentState, CellStatus } from '../../../shared/readiness';

/** Our words and icons for readiness: each status reads by colour, icon and word together. */
export const STATUS_LOOK: Record<CellStatus, { word: string; icon: string; hint: string }> = {
  current: { word: 'Current', icon: 'pi pi-check-circle', hint: 'valid beyond the next 90 days' },
  expiring: { word: 'Renew soon', icon: 'pi pi-hourglass', hint: 'runs out within 90 days' },
  expired: { word: 'Lapsed', icon: 'pi pi-times-circle', hint: 'ran out; not renewed' },
  none: { word: 'Not held', icon: 'pi pi-minus-circle', hint: 'never certified, or revoked' },
};

export const STATUS_ORDER: CellStatus[] = ['current', 'expiring', 'expired', 'none'];

export const ASSIGNMENT_LOOK: Record<AssignmentState, { word: string; icon: string }> = {
  open: { word: 'To do', icon: 'pi pi-circle' },
  overdue: { word: 'Overdue', icon: 'pi pi-exclamation-triangle' },
  done: { word: 'Done', icon: 'pi pi-check' },
};
