/** A websocket URL as it may be shown: apart from the adapter (websocket.ts) so that checking options does not load ws. */

/** Query parameters whose values are secrets (token=, access_token=, api_key=, password=, sig=…). */
const SECRET_PARAM = /token|key|secret|pass|auth|sig/i;

/**
 * The URL as it may be shown or written down: secret query values and a password replaced by ***
 * ("ws://host/?token=***"). Text that is not a URL is returned with any `token=…`-like value masked.
 */
export function redactUrl(text: string): string {
  let url: URL;
  try {
    url = new URL(text);
  } catch {
    return text.replace(/((?:token|key|secret|pass\w*|auth\w*|sig\w*)=)[^&\s]*/gi, '$1***');
  }
  if (url.password) url.password = '***';
  const parts = url.search
    .slice(1)
    .split('&')
    .filter((p) => p.length > 0)
    .map((p) => {
      const eq = p.indexOf('=');
      const name = decodeURIComponent(eq < 0 ? p : p.slice(0, eq));
      return eq >= 0 && SECRET_PARAM.test(name) ? `${p.slice(0, eq)}=***` : p;
    });
  url.search = parts.length ? `?${parts.join('&')}` : '';
  return url.href;
}
