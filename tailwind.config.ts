import type { Config } from "tailwindcss";

// Rillbook's palette: warm paper for long bench days, a dark lacquer rail, and a
// shellac-amber accent; the groove teal marks curves and signal, not actions.
const config: Config = {
  content: ["./app/**/*.{ts,tsx}", "./components/**/*.{ts,tsx}"],
  theme: {
    extend: {
      colors: {
        paper: { DEFAULT: "#f5f2ea", deep: "#ebe5d6", edge: "#d9d1bf" },
        ink: { DEFAULT: "#1d2327", soft: "#4a5459", faint: "#737c80" },
        lacquer: { DEFAULT: "#1f272a", raised: "#2b3539", line: "#3b474c", text: "#d6dcd9" },
        shellac: { DEFAULT: "#a9591a", deep: "#854310", wash: "#f4e3cd", glow: "#e39a4f" },
        groove: { DEFAULT: "#2f6f6a", wash: "#dcebe8" },
        alarm: { DEFAULT: "#a3312f", wash: "#f6dedb" },
        moss: { DEFAULT: "#4c7639", wash: "#e1ecd8" },
      },
      fontFamily: {
        sans: ["var(--font-sans)", "system-ui", "sans-serif"],
        display: ["var(--font-display)", "Georgia", "serif"],
        mono: ["var(--font-mono)", "ui-monospace", "monospace"],
      },
      fontSize: {
        // A modest scale (ratio ≈ 1.2) that keeps dense tables legible for hours.
        xs: ["0.75rem", { lineHeight: "1.1rem" }],
        sm: ["0.875rem", { lineHeight: "1.3rem" }],
        base: ["1rem", { lineHeight: "1.55rem" }],
        lg: ["1.2rem", { lineHeight: "1.7rem" }],
        xl: ["1.44rem", { lineHeight: "1.9rem" }],
        "2xl": ["1.73rem", { lineHeight: "2.2rem" }],
        "3xl": ["2.07rem", { lineHeight: "2.5rem" }],
      },
    },
  },
};

export default config;
