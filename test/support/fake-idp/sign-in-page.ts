import { createHash } from 'node:crypto';
import type { DemoStaffMember } from './demo-staff';

/**
 * The fake IdP's three pages: choose a person, hand the response to Emberline, or say what went
 * wrong. Plain HTML with inline styles, so they work offline and without any external file.
 */

function escapeHtml(value: string): string {
  return value.replace(/[<>&'"]/g, (character) => `&#${character.charCodeAt(0)};`);
}

const styles = `
  body { font: 16px/1.5 system-ui, sans-serif; margin: 0; background: #f3f5f4; color: #1c2421; }
  main { max-width: 34rem; margin: 3rem auto; padding: 2rem; background: #fff;
         border: 1px solid #c9d2ce; border-radius: 8px; }
  h1 { font-size: 1.4rem; margin: 0 0 .25rem; }
  .notice { background: #fff6dc; border-left: 4px solid #b58400; padding: .5rem .75rem; }
  fieldset { border: 1px solid #c9d2ce; border-radius: 6px; margin: 1.25rem 0; padding: .5rem 1rem; }
  legend { font-weight: 600; padding: 0 .25rem; }
  .person { display: flex; gap: .75rem; align-items: flex-start; padding: .6rem 0; }
  .person + .person { border-top: 1px solid #e3e8e6; }
  .person input { margin-top: .35rem; width: 1.1rem; height: 1.1rem; }
  .person small { display: block; color: #4a5752; }
  button { font: inherit; padding: .6rem 1.2rem; border: 0; border-radius: 6px;
           background: #1f5f4a; color: #fff; cursor: pointer; }
  button:focus-visible, input:focus-visible { outline: 3px solid #b58400; outline-offset: 2px; }
`;

function page(title: string, body: string): string {
  return `<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta name="referrer" content="no-referrer">
<title>${escapeHtml(title)}</title>
<style>${styles}</style>
</head>
<body><main>${body}</main></body>
</html>`;
}

const heading = `<h1>North Hospital sign-in</h1>
<p class="notice">Demonstration identity provider for Emberline. It asks for no password: never
use it for real people or real data.</p>`;

/** The chooser: one labelled radio button a person, then a single submit button. */
export function chooserPage(options: {
  action: string;
  requestToken: string;
  staff: readonly DemoStaffMember[];
}): string {
  const people = options.staff
    .map((person, index) => {
      const id = `person-${escapeHtml(person.key)}`;
      return `<div class="person">
  <input type="radio" name="staff" id="${id}" value="${escapeHtml(person.key)}" required${index === 0 ? ' checked' : ''}>
  <label for="${id}">${escapeHtml(person.displayName)}
    <small>${escapeHtml(person.jobTitle)} · ${escapeHtml(person.email)}</small></label>
</div>`;
    })
    .join('\n');
  return page(
    'North Hospital sign-in (demo)',
    `${heading}
<form method="post" action="${escapeHtml(options.action)}">
  <input type="hidden" name="request" value="${escapeHtml(options.requestToken)}">
  <fieldset>
    <legend>Continue to Emberline as</legend>
${people}
  </fieldset>
  <button type="submit">Sign in and return to Emberline</button>
</form>`,
  );
}

/** The one script of the fake: it submits the hand-over form as soon as the page loads. */
export const autoSubmitScript = "document.getElementById('hand-over').submit();";
export const autoSubmitScriptHash = `sha256-${createHash('sha256').update(autoSubmitScript).digest('base64')}`;

/**
 * The HTTP-POST binding's hand-over (SAML 2.0 Bindings §3.5.4): a form carrying SAMLResponse to
 * the ACS, sent by script, or by the button when scripts are off.
 */
export function handOverPage(options: {
  acsUrl: string;
  samlResponse: string;
  relayState: string;
}): string {
  const relayState = options.relayState
    ? `<input type="hidden" name="RelayState" value="${escapeHtml(options.relayState)}">`
    : '';
  return page(
    'Returning to Emberline',
    `${heading}
<form id="hand-over" method="post" action="${escapeHtml(options.acsUrl)}">
  <input type="hidden" name="SAMLResponse" value="${escapeHtml(options.samlResponse)}">
  ${relayState}
  <p>You are signed in. Returning you to Emberline…</p>
  <noscript><button type="submit">Continue to Emberline</button></noscript>
</form>
<script>${autoSubmitScript}</script>`,
  );
}

export function problemPage(message: string): string {
  return page(
    'North Hospital sign-in: cannot continue',
    `${heading}<h2>This sign-in cannot continue</h2><p>${escapeHtml(message)}</p>
<p>Go back to Emberline and start the sign-in again.</p>`,
  );
}
