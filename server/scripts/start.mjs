#!/usr/bin/env node
// `npm start`: the whole product with demo data on one machine.
// Installs what is missing, starts PostgreSQL on 127.0.0.1, migrates, seeds, starts the local fake
// identity provider, builds the client and serves everything at http://127.0.0.1:4300 (PORT overrides).
import { spawn } from 'node:child_process';
import { join } from 'node:path';
import { ensureDependencies, root, run, say, waitForPort } from './setup.mjs';

const port = Number(process.env.PORT ?? 4300);
const idpPort = Number(process.env.FAKE_IDP_PORT ?? 4301);
const publicUrl = process.env.PUBLIC_URL ?? `http://127.0.0.1:${port}`;

ensureDependencies();
const { startPostgres, ensureDatabase } = await import('./postgres.mjs');
const state = startPostgres();
await ensureDatabase('emberline', state);

const tsx = ['--import', 'tsx'];
const fail = (what) => {
  say(`${what} failed; see the messages above.`);
  process.exit(1);
};
if ((await run(process.execPath, [...tsx, 'server/src/tools/migrate.ts'])) !== 0) fail('migration');
if ((await run(process.execPath, [...tsx, 'server/src/tools/seed.ts'])) !== 0)
  fail('seeding the demo');

const children = [];
function start(name, args, env) {
  const child = spawn(process.execPath, args, {
    cwd: root,
    stdio: 'inherit',
    env: { ...process.env, ...env },
  });
  child.on('exit', (code) => {
    if (!stopping) {
      say(`${name} stopped (exit ${code}); stopping everything.`);
      stopAll(1);
    }
  });
  children.push(child);
  return child;
}

let stopping = false;
function stopAll(code = 0) {
  stopping = true;
  for (const child of children) child.kill('SIGTERM');
  setTimeout(() => process.exit(code), 500);
}
process.on('SIGINT', () => stopAll(0));
process.on('SIGTERM', () => stopAll(0));

start('fake identity provider', [...tsx, 'test/support/fake-idp/main.ts'], {
  FAKE_IDP_PORT: String(idpPort),
  SP_ACS_URL: `${publicUrl}/api/auth/saml/callback`,
  SP_ENTITY_ID: `${publicUrl}/api/auth/saml/metadata`,
});
await waitForPort(idpPort);

if (process.env.SKIP_BUILD !== '1') {
  say('building the client…');
  if ((await run(join(root, 'node_modules', '.bin', 'ng'), ['build'])) !== 0)
    fail('the client build');
}

start('server', [...tsx, 'server/src/main.ts'], { PORT: String(port), PUBLIC_URL: publicUrl });
await waitForPort(port);
say(`Emberline is up at ${publicUrl}`);
say(
  'demo accounts (password ember-demo-2026): admin@, presenter@, member@, proceduralist@, coordinator@, south@ …emberline.test',
);
say(
  `hospital SSO (fake identity provider) at http://127.0.0.1:${idpPort}; Ctrl-C stops everything.`,
);
if (!process.env.SMTP_URL && process.env.NODE_ENV !== 'production') {
  say(
    `mail goes to the local catcher on 127.0.0.1:${process.env.MAIL_CATCHER_PORT ?? 4325}; its mailbox is ${publicUrl}/api/dev/mail (administrator or coordinator).`,
  );
}
