/**
 * A few worker threads that read uploads (`dicom-read.worker.ts`), each job bounded in time
 * (the worker is terminated past `timeoutMs`) and each worker in memory (`resourceLimits`): a
 * file that makes dicom-parser recurse, loop or swell ends in a refusal, never in a hang or in
 * the server running out of memory. A terminated or crashed worker is replaced on demand.
 */
import { Worker } from 'node:worker_threads';
import type { ReadLimits, ReadReply, ReadRequest, ReadResult } from './dicom-read-protocol';
import { ImagingRefusal } from './imaging-refusal';

export interface DicomReadPoolOptions {
  /** Worker threads at most (each reads one upload at a time). */
  size: number;
  /** Longest a worker may spend on one upload, startup included. */
  timeoutMs: number;
  /** V8 heap of one worker (old generation), megabytes. */
  memoryLimitMb: number;
  /** Uploads waiting for a worker before new ones are refused with 503. */
  maxQueued: number;
  limits: ReadLimits;
}

interface Job {
  files: Uint8Array[];
  resolve: (result: ReadResult) => void;
  reject: (error: Error) => void;
}

interface PoolWorker {
  worker: Worker;
  job?: Job & { jobId: number; timer: NodeJS.Timeout; hasTimedOut: boolean };
  crash?: Error;
}

const isRunningFromSources = import.meta.url.endsWith('.ts');

function workerEntry(): URL {
  return isRunningFromSources
    ? new URL('./dicom-read-worker-bootstrap.mjs', import.meta.url)
    : new URL('./dicom-read.worker.js', import.meta.url);
}

/** An ArrayBuffer holding exactly the file, so that it can be transferred to the worker. */
function ownBuffer(file: Uint8Array): ArrayBuffer {
  const isWhole =
    file.byteOffset === 0 &&
    file.buffer instanceof ArrayBuffer &&
    file.byteLength === file.buffer.byteLength;
  return isWhole ? (file.buffer as ArrayBuffer) : file.slice().buffer;
}

export class DicomReadPool {
  private readonly idle: PoolWorker[] = [];
  private readonly all = new Set<PoolWorker>();
  private readonly queue: Job[] = [];
  private nextJobId = 1;
  private isClosed = false;

  constructor(private readonly options: DicomReadPoolOptions) {}

  /** Reads the files of one upload; rejects with an ImagingRefusal for anything refused. */
  read(files: Uint8Array[]): Promise<ReadResult> {
    if (this.isClosed) return Promise.reject(new Error('the DICOM reading pool is closed'));
    if (this.queue.length >= this.options.maxQueued) {
      return Promise.reject(
        new ImagingRefusal(
          503,
          'busy',
          'Emberline is reading other uploads; try again in a minute.',
        ),
      );
    }
    return new Promise<ReadResult>((resolve, reject) => {
      this.queue.push({ files, resolve, reject });
      this.pump();
    });
  }

  /** Starts the workers ahead of the first upload (their startup then counts for nothing). */
  async warm(): Promise<void> {
    const started: Promise<void>[] = [];
    while (this.all.size < this.options.size) {
      const entry = this.spawn();
      this.idle.push(entry);
      started.push(
        new Promise((resolve) => {
          entry.worker.once('online', () => resolve());
          entry.worker.once('exit', () => resolve());
        }),
      );
    }
    await Promise.all(started);
  }

  async close(): Promise<void> {
    this.isClosed = true;
    for (const job of this.queue.splice(0)) job.reject(new Error('the reading pool closed'));
    await Promise.all([...this.all].map((entry) => entry.worker.terminate()));
  }

  private pump(): void {
    while (this.queue.length > 0) {
      const entry = this.idle.pop() ?? (this.all.size < this.options.size ? this.spawn() : null);
      if (!entry) return;
      const job = this.queue.shift();
      if (!job) {
        this.idle.push(entry);
        return;
      }
      this.start(entry, job);
    }
  }

  private spawn(): PoolWorker {
    const worker = new Worker(workerEntry(), {
      resourceLimits: {
        maxOldGenerationSizeMb: this.options.memoryLimitMb,
        maxYoungGenerationSizeMb: Math.min(64, Math.max(8, this.options.memoryLimitMb / 8)),
        stackSizeMb: 4,
      },
      // Whatever a library might print stays out of the server's logs.
      stdout: true,
      stderr: true,
    });
    worker.stdout.resume();
    worker.stderr.resume();
    worker.unref();
    const entry: PoolWorker = { worker };
    this.all.add(entry);
    worker.on('message', (reply: ReadReply) => this.finish(entry, reply));
    worker.on('error', (error) => {
      entry.crash = error;
    });
    worker.on('exit', () => this.retire(entry));
    return entry;
  }

  private start(entry: PoolWorker, job: Job): void {
    const jobId = this.nextJobId++;
    const timer = setTimeout(() => {
      if (entry.job) entry.job.hasTimedOut = true;
      void entry.worker.terminate();
    }, this.options.timeoutMs);
    entry.job = { ...job, jobId, timer, hasTimedOut: false };
    entry.worker.ref();
    const buffers = job.files.map(ownBuffer);
    const request: ReadRequest = { jobId, files: buffers, limits: this.options.limits };
    try {
      entry.worker.postMessage(request, buffers);
    } catch {
      // A buffer that cannot be transferred is copied instead.
      entry.worker.postMessage(request);
    }
  }

  private finish(entry: PoolWorker, reply: ReadReply): void {
    const job = entry.job;
    if (!job || job.jobId !== reply.jobId) return;
    clearTimeout(job.timer);
    entry.job = undefined;
    entry.worker.unref();
    this.idle.push(entry);
    if (reply.ok) job.resolve({ instances: reply.instances, skippedCount: reply.skippedCount });
    else job.reject(ImagingRefusal.from(reply.refusal));
    this.pump();
  }

  /** A worker ended: its job, if any, is refused for the reason it ended. */
  private retire(entry: PoolWorker): void {
    this.all.delete(entry);
    const idleIndex = this.idle.indexOf(entry);
    if (idleIndex >= 0) this.idle.splice(idleIndex, 1);
    const job = entry.job;
    entry.job = undefined;
    if (job) {
      clearTimeout(job.timer);
      job.reject(this.refusalOfEndedJob(job.hasTimedOut, entry.crash));
    }
    if (!this.isClosed) this.pump();
  }

  private refusalOfEndedJob(hasTimedOut: boolean, crash: Error | undefined): Error {
    const seconds = Number((this.options.timeoutMs / 1000).toFixed(1));
    if (hasTimedOut) {
      return new ImagingRefusal(
        400,
        'too-complex',
        `Reading the upload took longer than ${seconds} s; a file is damaged or far more ` +
          'complex than an image series needs.',
      );
    }
    const code = (crash as { code?: unknown } | undefined)?.code;
    if (code === 'ERR_WORKER_OUT_OF_MEMORY') {
      return new ImagingRefusal(
        400,
        'too-complex',
        `Reading the upload needed more than ${this.options.memoryLimitMb} MB of memory; a ` +
          'file is damaged or far more complex than an image series needs.',
      );
    }
    // Not the upload's fault as far as anyone can tell: an internal error, logged as such.
    return new Error(`the DICOM reading worker stopped (${code ? String(code) : 'no code'})`);
  }
}
