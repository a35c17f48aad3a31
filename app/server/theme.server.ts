export const THEMES = ["system", "light", "dark"] as const;
export type Theme = (typeof THEMES)[number];

export function readTheme(request: Request): Theme {
  const match = /(?:^|;\s*)rw_theme=(system|light|dark)/.exec(request.headers.get("Cookie") ?? "");
  return (match?.[1] as Theme | undefined) ?? "system";
}

export function themeCookie(theme: Theme) {
  return `rw_theme=${theme}; Path=/; Max-Age=31536000; SameSite=Lax`;
}
