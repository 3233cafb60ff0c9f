import type { NavItem } from "@/lib/navigation";

const paths: Record<NavItem["icon"], string> = {
  home: "M3 10.5 10 4l7 6.5V17a1 1 0 0 1-1 1h-4v-5H8v5H4a1 1 0 0 1-1-1z",
  shelf: "M3 4h14M3 10h14M3 16h14M5 4v12M9 4v6M13 10v6M15 4v6",
  queue: "M4 5h9M4 10h9M4 15h6M15.5 13v5M13 15.5l2.5 2.5 2.5-2.5",
  curve: "M2 6c3 0 4 0 6 3s3 5 5 5 4-2 5-6",
  bench:
    "M10 10m-6 0a6 6 0 1 0 12 0a6 6 0 1 0-12 0M10 10m-1.5 0a1.5 1.5 0 1 0 3 0a1.5 1.5 0 1 0-3 0M15 3l3 3-5 3",
  review: "M4 10.5 8 14.5 16 5.5",
  audit: "M5 3h7l3 3v11H5zM8 9h5M8 12h5M8 15h3",
  people:
    "M7 9a3 3 0 1 0 0-6 3 3 0 0 0 0 6zM2 17c0-3 2.5-5 5-5s5 2 5 5M14 8a2.5 2.5 0 1 0 0-5M14 12c2 0 4 1.5 4 4.5",
  mail: "M3 5h14v10H3zM3 5l7 6 7-6",
  campaign: "M4 9a6 6 0 0 1 10.4-3.6M16 11a6 6 0 0 1-10.4 3.6M14.8 2.5v3.4h-3.4M5.2 17.5v-3.4h3.4",
  equipment:
    "M2 4h16v13H2zM9 10.5m-4.5 0a4.5 4.5 0 1 0 9 0a4.5 4.5 0 1 0-9 0M9 10.5m-.8 0a.8.8 0 1 0 1.6 0a.8.8 0 1 0-1.6 0M16 6v5l-3.5 2.5",
};

export function NavIcon({ icon }: { icon: NavItem["icon"] }) {
  return (
    <svg
      viewBox="0 0 20 20"
      width="18"
      height="18"
      aria-hidden
      fill="none"
      stroke="currentColor"
      strokeWidth="1.5"
      strokeLinecap="round"
      strokeLinejoin="round"
    >
      <path d={paths[icon]} />
    </svg>
  );
}
