export const THEMES = ["system", "light", "dark"] as const;
export type Theme = (typeof THEMES)[number];

export function readTheme(cookieHeader: string | null): Theme {
  const match = /(?:^|;\s*)rw_theme=(system|light|dark)/.exec(cookieHeader ?? "");
  return (match?.[1] as Theme | undefined) ?? "system";
}

/**
 * A display preference, not a secret: readable by the page so the toggle can
 * write it at once and a reload right after a click never shows the old theme.
 */
export function themeCookie(theme: Theme) {
  return `rw_theme=${theme}; Path=/; Max-Age=31536000; SameSite=Lax`;
}
