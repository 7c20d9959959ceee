import type { Config } from "tailwindcss";

export default {
  content: ["./app/**/*.{ts,tsx}", "./lib/**/*.{ts,tsx}"],
  theme: {
    extend: {
      colors: {
        // Burstwise's own palette: a soil-ochre accent over slate.
        ink: { DEFAULT: "#1d2433", soft: "#4a5568" },
        ochre: { DEFAULT: "#b45309", light: "#fde7c7", dark: "#7c3a05" },
        moss: { DEFAULT: "#3f6212", light: "#ecfccb" },
        paper: "#faf8f4",
      },
      fontFamily: { sans: ["var(--font-sans)", "system-ui", "sans-serif"] },
    },
  },
} satisfies Config;
