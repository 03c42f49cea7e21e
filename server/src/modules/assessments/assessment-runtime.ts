/**
 * Starts the assessment machinery of one process: the queue, and — when this process works
 * jobs — the worker-thread pool and the job handler. The server works jobs by default
 * (`ASSESSMENT_IN_SERVER=0` leaves them to `npm run worker` processes elsewhere).
 */
import { join } from 'node:path';
import type { MikroORM } from '@mikro-orm/postgresql';
import { FileStore } from '../imaging/file-store';
import { imagingSettingsFromEnvironment } from '../imaging/imaging-settings';
import { AssessmentDisplayStore } from './assessment-display-store';
import {
  AssessmentPool,
  assessmentPoolSettingsFromEnvironment,
  type AssessmentPoolSettings,
} from './assessment-pool';
import { assessmentProcessor } from './assessment-processor';
import {
  reaperSettingsFromEnvironment,
  startReaper,
  type ReaperSettings,
} from './assessment-reaper';
import {
  AssessmentQueue,
  assessmentQueueSettingsFromEnvironment,
  type AssessmentQueueSettings,
} from './assessment-queue';

export interface AssessmentRuntime {
  queue: AssessmentQueue;
  displays: AssessmentDisplayStore;
  pool: AssessmentPool | null;
  close(): Promise<void>;
}

export interface AssessmentRuntimeOptions {
  orm: MikroORM;
  connectionString: string;
  log: (message: string, error?: unknown) => void;
  /** Work jobs in this process (the server by default, always in `npm run worker`). */
  isWorking: boolean;
  fileStoreDir?: string;
  queue?: Partial<AssessmentQueueSettings>;
  pool?: Partial<AssessmentPoolSettings>;
  reaper?: Partial<ReaperSettings>;
}

export function assessmentStores(fileStoreDir: string) {
  return {
    labelMaps: new FileStore(join(fileStoreDir, 'label-maps')),
    displays: new AssessmentDisplayStore(new FileStore(fileStoreDir)),
  };
}

export async function startAssessmentRuntime(
  options: AssessmentRuntimeOptions,
): Promise<AssessmentRuntime> {
  const fileStoreDir = options.fileStoreDir ?? imagingSettingsFromEnvironment().fileStoreDir;
  const stores = assessmentStores(fileStoreDir);
  const queueSettings = {
    ...assessmentQueueSettingsFromEnvironment(options.connectionString),
    ...options.queue,
  };
  const queue = await AssessmentQueue.start(queueSettings, (error) =>
    options.log('The assessment queue reported an error.', error),
  );
  let pool: AssessmentPool | null = null;
  if (options.isWorking) {
    pool = new AssessmentPool({ ...assessmentPoolSettingsFromEnvironment(), ...options.pool });
    await queue.work(
      pool.threads,
      assessmentProcessor({
        orm: options.orm,
        pool,
        labelMaps: stores.labelMaps,
        displays: stores.displays,
        retryLimit: queueSettings.retryLimit,
        log: options.log,
      }),
    );
  }
  // Every process that holds the queue reaps: stuck rows are settled even with no worker here.
  const reaper = startReaper(
    options.orm,
    queue,
    { ...reaperSettingsFromEnvironment(), ...options.reaper },
    options.log,
  );
  return {
    queue,
    displays: stores.displays,
    pool,
    async close() {
      await reaper.stop();
      await queue.stop();
      await pool?.close();
    },
  };
}
