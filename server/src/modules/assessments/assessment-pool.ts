/**
 * The worker-thread pool (piscina) that runs the assessment engine off the event loop. Each
 * task gets a MessagePort for progress; a task past `timeoutMs` is aborted and its thread
 * replaced, and each thread's heap is bounded.
 */
import { MessageChannel } from 'node:worker_threads';
import { availableParallelism } from 'node:os';
import Piscina from 'piscina';
import { EngineRefusal, type EngineRefusalProblem } from '@emberline/shared';
import type {
  AssessmentTaskInput,
  AssessmentTaskOutput,
  AssessmentTaskRefusal,
  TaskProgress,
} from './assessment-task-protocol';

const isRunningFromSources = import.meta.url.endsWith('.ts');

function taskEntry(): string {
  // On Node 20 a worker thread does not inherit tsx from its parent (see the imaging README);
  // the bootstrap registers it.
  return isRunningFromSources
    ? new URL('./assessment-task-bootstrap.mjs', import.meta.url).href
    : new URL('./assessment.task.js', import.meta.url).href;
}

export interface AssessmentPoolSettings {
  threads: number;
  timeoutMs: number;
  memoryLimitMb: number;
}

export function assessmentPoolSettingsFromEnvironment(env = process.env): AssessmentPoolSettings {
  return {
    threads: Number(env.ASSESSMENT_THREADS ?? Math.max(1, Math.min(2, availableParallelism() - 1))),
    timeoutMs: Number(env.ASSESSMENT_TIMEOUT_SECONDS ?? 240) * 1000,
    memoryLimitMb: Number(env.ASSESSMENT_MEMORY_MB ?? 1536),
  };
}

export class AssessmentPool {
  private readonly pool: Piscina;

  constructor(private readonly settings: AssessmentPoolSettings) {
    this.pool = new Piscina({
      filename: taskEntry(),
      minThreads: 0,
      maxThreads: settings.threads,
      idleTimeout: 60_000,
      resourceLimits: { maxOldGenerationSizeMb: settings.memoryLimitMb },
    });
  }

  get threads(): number {
    return this.settings.threads;
  }

  /**
   * Runs one assessment; `onProgress` hears each stage as it starts and ends. A refusal of the
   * engine is thrown here again as the `EngineRefusal` it was in the thread.
   */
  async run(
    input: AssessmentTaskInput,
    transfer: ArrayBuffer[],
    onProgress: (progress: TaskProgress) => void,
  ): Promise<AssessmentTaskOutput> {
    const channel = new MessageChannel();
    channel.port1.on('message', (message: TaskProgress) => onProgress(message));
    try {
      const output = (await this.pool.run(
        { input, port: channel.port2 },
        {
          transferList: [channel.port2, ...transfer],
          signal: AbortSignal.timeout(this.settings.timeoutMs),
        },
      )) as AssessmentTaskOutput | AssessmentTaskRefusal;
      if ('refusal' in output) {
        const { problem, field, message } = output.refusal;
        throw new EngineRefusal(problem as EngineRefusalProblem, field, message);
      }
      return output;
    } catch (error) {
      if (error instanceof Error && error.name === 'AbortError') {
        throw new Error(
          `The assessment took longer than ${Math.round(this.settings.timeoutMs / 1000)} s and was stopped.`,
          { cause: error },
        );
      }
      throw error;
    } finally {
      channel.port1.close();
    }
  }

  async close(): Promise<void> {
    await this.pool.destroy();
  }
}
