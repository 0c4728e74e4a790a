/** Only same-app paths are followed after sign-in, so a crafted link cannot send users elsewhere. */
export function safeReturnUrl(value: string | null | undefined): string {
  if (!value || !value.startsWith('/') || value.startsWith('//') || value.startsWith('/\\')) return '/';
  if (value.startsWith('/sign-in')) return '/';
  return value;
}
