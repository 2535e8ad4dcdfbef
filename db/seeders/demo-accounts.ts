/** The demo shop's three accounts, one per role. Printed by `npm start` and listed in the README. */
import type { Role } from '../../src/lib/roles';

export const DEMO_ACCOUNTS: { role: Role; name: string; email: string; password: string }[] = [
  { role: 'admin', name: 'Ines Marlow', email: 'manager@kestrel-studio.example', password: 'dispatch-demo-2026' },
  { role: 'photographer', name: 'Orla Kestrel', email: 'orla@kestrel-studio.example', password: 'studio-demo-2026' },
  { role: 'buyer', name: 'Tom Adair', email: 'tom@picture-desk.example', password: 'gallery-demo-2026' },
];
