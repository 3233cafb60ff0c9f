import type { Role } from "../../lib/auth/roles";

/**
 * The invented demo lab: Marrow Hill Sound Archive and its four people, one per role.
 * These are demo credentials for a local lab on loopback, printed by `npm start`.
 */
export const demoAccounts: ReadonlyArray<{ role: Role; name: string; email: string; password: string }> = [
  {
    role: "admin",
    name: "Ines Calder",
    email: "ines.calder@marrowhill.example",
    password: "admin-demo-2026",
  },
  {
    role: "archivist",
    name: "Tomas Rye",
    email: "tomas.rye@marrowhill.example",
    password: "archivist-demo-2026",
  },
  {
    role: "engineer",
    name: "Wen Okafor",
    email: "wen.okafor@marrowhill.example",
    password: "engineer-demo-2026",
  },
  {
    role: "curator",
    name: "Della Prior",
    email: "della.prior@marrowhill.example",
    password: "curator-demo-2026",
  },
];
