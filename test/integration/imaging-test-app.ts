/**
 * The set-up every imaging integration spec shares: its own file store and de-identification
 * secret in the environment, the app started once, the demo data and an empty store before each
 * test. Call `useImagingTestApp` at the top level of a spec; it registers the hooks.
 */
import { mkdirSync, mkdtempSync, readdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, beforeEach, expect } from 'vitest';
import { decodeVolumeFile, type ImageSeriesView } from '@emberline/shared';
import { ApiClient, startTestApp, type TestApp } from '../support/test-app';
import { demoPassword, resetToDemo, type DemoIds } from '../support/demo';
import { setEnvironment } from './imaging-fixtures';

export interface ImagingTestContext {
  readonly app: TestApp;
  readonly ids: DemoIds;
  readonly fileStoreDir: string;
  /** A client signed in as the demo presenter of the north cases. */
  signIn(email?: string): Promise<ApiClient>;
  /** The volume files (`.vol`) in the file store. */
  volumesStored(): string[];
}

export function useImagingTestApp(
  name: string,
  secret: string,
  environment: Record<string, string> = {},
): ImagingTestContext {
  const fileStoreDir = mkdtempSync(join(tmpdir(), `emberline-${name}-`));
  let restoreEnvironment: () => void = () => undefined;
  let app: TestApp | undefined;
  let ids: DemoIds | undefined;

  beforeAll(async () => {
    restoreEnvironment = setEnvironment({
      FILE_STORE_DIR: fileStoreDir,
      DEIDENTIFICATION_SECRET: secret,
      ...environment,
    });
    app = await startTestApp();
  });

  afterAll(async () => {
    await app?.close();
    restoreEnvironment();
    rmSync(fileStoreDir, { recursive: true, force: true });
  });

  beforeEach(async () => {
    if (!app) throw new Error('the test app did not start');
    ids = await resetToDemo(app.orm);
    rmSync(fileStoreDir, { recursive: true, force: true });
    mkdirSync(fileStoreDir, { recursive: true });
  });

  return {
    get app() {
      if (!app) throw new Error('the test app is not started yet');
      return app;
    },
    get ids() {
      if (!ids) throw new Error('the demo data is not seeded yet');
      return ids;
    },
    fileStoreDir,
    async signIn(email = 'presenter@emberline.test') {
      const client = new ApiClient(this.app.app);
      expect((await client.signIn(email, demoPassword)).status).toBe(200);
      return client;
    },
    volumesStored() {
      return (readdirSync(fileStoreDir, { recursive: true }) as string[]).filter((file) =>
        String(file).endsWith('.vol'),
      );
    },
  };
}

/** The stored volume of a series, read through the API and decoded. */
export async function volumeOf(client: ApiClient, series: ImageSeriesView) {
  const response = await client.agent
    .get(series.volumeUrl)
    .buffer(true)
    .parse((res, done) => {
      const chunks: Buffer[] = [];
      res.on('data', (chunk: Buffer) => chunks.push(chunk));
      res.on('end', () => done(null, Buffer.concat(chunks)));
    });
  expect(response.status).toBe(200);
  return decodeVolumeFile(new Uint8Array(response.body as Buffer));
}
