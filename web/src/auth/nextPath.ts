/** Only same-site paths may be returned to after sign-in, so a crafted link cannot bounce elsewhere. */
export function safeNext(raw: string | null | undefined, fallback = '/runs'): string {
  if (!raw || !raw.startsWith('/') || raw.startsWith('//') || raw.startsWith('/\\')) return fallback;
  return raw;
}

export function signInPathFor(location: { pathname: string; search: string; hash?: string }): string {
  const here = `${location.pathname}${location.search}${location.hash ?? ''}`;
  return `/sign-in?next=${encodeURIComponent(here)}`;
}
