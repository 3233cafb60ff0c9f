/**
 * Single-use links (invitations, password resets) as the app shows mail: the token is
 * hidden. Whoever can read the Outbox (an admin) must not be able to use a link meant for
 * someone else, e.g. reset a curator's password and approve as that curator. The message
 * sent is not changed: the worker sends the stored text.
 */
export const hiddenToken = "[hidden: single-use link]";

const singleUseLink = /(\/(?:invite|reset)\/)[A-Za-z0-9_-]{16,}/g;

export function redactSingleUseLinks(text: string): string {
  return text.replace(singleUseLink, `$1${hiddenToken}`);
}
