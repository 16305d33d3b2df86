/** "?a=1&b=x" from the defined, non-empty values; "" when there are none. */
export function qs(params: Record<string, string | number | undefined | null>): string {
  const s = new URLSearchParams();
  for (const [k, v] of Object.entries(params)) if (v !== undefined && v !== null && v !== '') s.set(k, String(v));
  const text = s.toString();
  return text ? `?${text}` : '';
}
