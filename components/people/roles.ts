import { ROLES, ROLE_LABEL, type Role } from '@/shared/roles';
import type { Choice } from '@/components/ui/SegmentedChoice';

export const ROLE_CHOICES: Choice<Role>[] = ROLES.map((r) => ({ value: r, label: ROLE_LABEL[r] }));
