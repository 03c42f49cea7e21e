import { fileURLToPath } from 'node:url';
import { startFakeIdp } from './fake-idp';

/**
 * `node --import tsx test/support/fake-idp/main.ts`: the demo's identity provider, started by
 * `npm start` beside the server. Listens on 127.0.0.1 only.
 */
const port = Number(process.env.FAKE_IDP_PORT ?? 4301);
const spAcsUrl = process.env.SP_ACS_URL ?? 'http://127.0.0.1:4300/api/auth/saml/callback';
const spEntityId = process.env.SP_ENTITY_ID ?? new URL('metadata', spAcsUrl).href;
const dataDir =
  process.env.FAKE_IDP_DIR ?? fileURLToPath(new URL('../../../.data/fake-idp/', import.meta.url));

const idp = await startFakeIdp({ port, spAcsUrl, spEntityId, dataDir });
// One line for whoever waits on it (server/scripts/start.mjs): the IdP answers from now on.
process.stdout.write(`fake identity provider ready at ${idp.ssoUrl} for ${spEntityId}\n`);

async function shutDown(): Promise<void> {
  await idp.close();
  process.exit(0);
}
process.on('SIGTERM', () => void shutDown());
process.on('SIGINT', () => void shutDown());
