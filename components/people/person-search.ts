/**
 * People search on the admin's list, in the browser: the whole list is already loaded (GET
 * /api/users answers every account of the lab, tens of people), so filtering it costs no request
 * and answers on every key press. Each word of the query must appear in the name, the e-mail
 * address or the role's label, ignoring case and accents.
 */
import { ROLE_LABEL, type Role } from '@/shared/roles';

const fold = (s: string) =>
  s
    .normalize('NFD')
    .replace(/[\u0300-\u036f]/g, '')
    .toLowerCase();

export function matchesPerson(person: { name: string; email: string; role: Role }, query: string): boolean {
  const words = fold(query).split(/\s+/).filter(Boolean);
  if (!words.length) return true;
  const hay = fold(`${person.name} ${person.email} ${ROLE_LABEL[person.role]} ${person.role}`);
  return words.every((w) => hay.includes(w));
}
