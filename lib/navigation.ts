import type { Action } from "./auth/permissions";

export interface NavItem {
  href: string;
  label: string;
  action: Action;
  blurb: string;
  icon:
    | "home"
    | "shelf"
    | "queue"
    | "curve"
    | "bench"
    | "review"
    | "audit"
    | "people"
    | "mail"
    | "equipment"
    | "campaign";
}

/** The lab's places; each person sees those their role may use (the server checks again). */
export const navItems: NavItem[] = [
  { href: "/", label: "Overview", action: "lab:enter", blurb: "Your day in the lab", icon: "home" },
  {
    href: "/catalogue",
    label: "Catalogue",
    action: "catalogue:read",
    blurb: "Accessions, discs and sides",
    icon: "shelf",
  },
  {
    href: "/queue",
    label: "My queue",
    action: "bench:use",
    blurb: "Sides assigned to you for transfer",
    icon: "queue",
  },
  {
    href: "/curves",
    label: "Curves",
    action: "curves:read",
    blurb: "Playback curve library and workbench",
    icon: "curve",
  },
  {
    href: "/campaigns",
    label: "Campaigns",
    action: "campaigns:run",
    blurb: "Sides re-rendered after a preset is corrected",
    icon: "campaign",
  },
  {
    href: "/bench",
    label: "Transfer bench",
    action: "bench:use",
    blurb: "Choose curves, upload transfers, render",
    icon: "bench",
  },
  {
    href: "/equipment",
    label: "Equipment",
    action: "equipment:read",
    blurb: "Register, chains, calibrations and recall",
    icon: "equipment",
  },
  {
    href: "/review",
    label: "Review",
    action: "review:decide",
    blurb: "Approve or return sides",
    icon: "review",
  },
  {
    href: "/audit",
    label: "Audit",
    action: "audit:read",
    blurb: "Provenance, fixity and exports",
    icon: "audit",
  },
  {
    href: "/people",
    label: "People",
    action: "people:read",
    blurb: "Invitations, roles and access",
    icon: "people",
  },
  { href: "/outbox", label: "Outbox", action: "outbox:read", blurb: "Mail the lab has sent", icon: "mail" },
];
