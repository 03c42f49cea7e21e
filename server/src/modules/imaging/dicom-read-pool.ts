/**
 * A few worker threads that read uploads (`dicom-read.worker.ts`). Each file is bounded in
 * time (the worker reports the file it starts; past `timeoutMs` without a report the worker is
 * terminated and the refusal names that file) and each worker in memory (`resourceLimits` for
 * the JavaScript heap; the codecs give back WebAssembly memory between files): a file that
 * makes dicom-parser recurse, a codec loop or anything swell ends in a refusal, never in a hang
 * or in the server running out of memory. A terminated or crashed worker is replaced on demand.
 */
import { Worker } from 'node:worker_threads';
import type { DecodedInstance, ScannedImage } from './dicom-instance-reader';
import type {
  ReadLimits,
  ReadRequest,
  ScanResult,
  UploadedFileMessage,
  WorkerMessage,
} from './dicom-read-protocol';
import { ImagingRefusal } from './imaging-refusal';

export interface DicomReadPoolOptions {
  /** Worker threads at most (each reads one job at a time). */
  size: number;
  /** Longest a worker may spend on one file (or on a run of 16 frames of one), startup included. */
  timeoutMs: number;
  /** V8 heap of one worker (old generation), megabytes. */
  memoryLimitMb: number;
  /** Jobs waiting for a worker before new ones are refused with 503. */
  maxQueued: number;
  limits: ReadLimits;
}

/** A file of an upload to scan: its name (a relative path for folders) and bytes. */
export interface FileToScan {
  name: string;
  bytes: Uint8Array;
}

/** A file to decode: its label from the scan and its bytes. */
export interface FileToDecode {
  label: string;
  bytes: Uint8Array;
}

export interface DecodedFile {
  scanned: ScannedImage;
  decoded: DecodedInstance;
}

export interface ReadProgress {
  fileIndex: number;
  framesDone: number;
  label: string;
  /** Scans: how many files the upload holds once unpacked. */
  fileCount?: number;
}

/** A file may report progress many times (every 16 frames), but take at most this many bounds in all. */
const boundsPerFile = 10;

interface Job {
  kind: 'scan' | 'decode';
  files: { name: string; bytes: Uint8Array }[];
  /** Decode only: copy the bytes to the worker rather than hand them over. */
  keepBytes: boolean;
  onProgress?: (progress: ReadProgress) => void;
  resolve: (result: ScanResult | DecodedFile[]) => void;
  reject: (error: Error) => void;
}

interface RunningJob extends Job {
  jobId: number;
  /** When the file being read was started, and its index. */
  fileStartedAt: number;
  fileIndex: number;
  timer: NodeJS.Timeout;
  hasTimedOut: boolean;
  currentLabel: string;
  decoded: DecodedFile[];
}

interface PoolWorker {
  worker: Worker;
  job?: RunningJob;
  crash?: Error;
  /** The worker's codecs are compiled; until then a job's clock allows for the startup. */
  isReady: boolean;
}

/** How long a new worker may take to start (its WebAssembly codecs compiled) before its first file. */
const startupAllowanceMs = 30_000;

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

  /** Unpacks an upload and reads every file's header; rejects with an ImagingRefusal. */
  scan(files: FileToScan[], onProgress?: (progress: ReadProgress) => void): Promise<ScanResult> {
    return this.submit({
      kind: 'scan',
      files,
      keepBytes: false,
      onProgress,
    }) as Promise<ScanResult>;
  }

  /**
   * Decodes the pixels of image files (in the order given); with `keepBytes` the caller's
   * bytes stay usable (they are copied to the worker), else they are handed over.
   */
  decode(
    files: FileToDecode[],
    options: { keepBytes: boolean; onProgress?: (progress: ReadProgress) => void },
  ): Promise<DecodedFile[]> {
    return this.submit({
      kind: 'decode',
      files: files.map((file) => ({ name: file.label, bytes: file.bytes })),
      keepBytes: options.keepBytes,
      onProgress: options.onProgress,
    }) as Promise<DecodedFile[]>;
  }

  private submit(job: Omit<Job, 'resolve' | 'reject'>): Promise<ScanResult | DecodedFile[]> {
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
    return new Promise<ScanResult | DecodedFile[]>((resolve, reject) => {
      this.queue.push({ ...job, resolve, reject });
      this.pump();
    });
  }

  /** Starts the workers ahead of the first upload (their startup, codecs included, then counts for nothing). */
  async warm(): Promise<void> {
    const started: Promise<void>[] = [];
    while (this.all.size < this.options.size) {
      const entry = this.spawn();
      this.idle.push(entry);
      started.push(
        new Promise((resolve) => {
          // Ready once its codecs are compiled (WebAssembly), so that no job waits for them.
          entry.worker.on('message', (message: WorkerMessage) => {
            if (message.type === 'ready') resolve();
          });
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
    const entry: PoolWorker = { worker, isReady: false };
    this.all.add(entry);
    worker.on('message', (message: WorkerMessage) => this.receive(entry, message));
    worker.on('error', (error) => {
      entry.crash = error;
    });
    worker.on('exit', () => this.retire(entry));
    return entry;
  }

  private start(entry: PoolWorker, job: Job): void {
    const jobId = this.nextJobId++;
    entry.job = {
      ...job,
      jobId,
      timer: this.clock(entry, this.options.timeoutMs + (entry.isReady ? 0 : startupAllowanceMs)),
      hasTimedOut: false,
      fileStartedAt: Date.now(),
      fileIndex: -1,
      currentLabel: 'The upload',
      decoded: [],
    };
    entry.worker.ref();
    const buffers = job.files.map((file) =>
      job.keepBytes ? file.bytes.slice().buffer : ownBuffer(file.bytes),
    );
    const request: ReadRequest =
      job.kind === 'scan'
        ? {
            jobId,
            kind: 'scan',
            files: job.files.map((file, index): UploadedFileMessage => ({
              name: file.name,
              buffer: buffers[index],
            })),
            limits: this.options.limits,
          }
        : {
            jobId,
            kind: 'decode',
            files: job.files.map((file, index) => ({ label: file.name, buffer: buffers[index] })),
            limits: this.options.limits,
          };
    try {
      entry.worker.postMessage(request, buffers);
    } catch {
      // A buffer that cannot be transferred is copied instead.
      entry.worker.postMessage(request);
    }
  }

  /** The time bound of the file being read: restarted by every progress report. */
  private clock(entry: PoolWorker, ms: number): NodeJS.Timeout {
    return setTimeout(
      () => {
        if (entry.job) entry.job.hasTimedOut = true;
        void entry.worker.terminate();
      },
      Math.max(1, ms),
    );
  }

  private receive(entry: PoolWorker, message: WorkerMessage): void {
    if (message.type === 'ready') {
      entry.isReady = true;
      return;
    }
    const job = entry.job;
    if (!job || job.jobId !== message.jobId) return;
    switch (message.type) {
      case 'progress': {
        clearTimeout(job.timer);
        if (message.fileIndex !== job.fileIndex) {
          job.fileIndex = message.fileIndex;
          job.fileStartedAt = Date.now();
        }
        // A bound between reports, and ten bounds for the whole file, however many it reports.
        const fileLeft = job.fileStartedAt + boundsPerFile * this.options.timeoutMs - Date.now();
        job.timer = this.clock(entry, Math.min(this.options.timeoutMs, fileLeft));
        job.currentLabel = message.label;
        job.onProgress?.({
          fileIndex: message.fileIndex,
          framesDone: message.framesDone,
          label: message.label,
          fileCount: message.fileCount,
        });
        return;
      }
      case 'decoded':
        job.decoded[message.index] = { scanned: message.scanned, decoded: message.decoded };
        return;
      case 'scanned': {
        const { entries, skippedCount, skipped, directory } = message;
        this.settle(entry, () => job.resolve({ entries, skippedCount, skipped, directory }));
        return;
      }
      case 'done':
        this.settle(entry, () => job.resolve(job.decoded));
        return;
      case 'refused':
        this.settle(entry, () => job.reject(ImagingRefusal.from(message.refusal)));
    }
  }

  private settle(entry: PoolWorker, answer: () => void): void {
    const job = entry.job;
    if (!job) return;
    clearTimeout(job.timer);
    entry.job = undefined;
    entry.worker.unref();
    this.idle.push(entry);
    answer();
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
      job.reject(this.refusalOfEndedJob(job.currentLabel, job.hasTimedOut, entry.crash));
    }
    if (!this.isClosed) this.pump();
  }

  private refusalOfEndedJob(label: string, hasTimedOut: boolean, crash: Error | undefined): Error {
    const seconds = Number((this.options.timeoutMs / 1000).toFixed(2));
    if (hasTimedOut) {
      return new ImagingRefusal(
        400,
        'too-complex',
        `${label} took longer than ${seconds} s to read (a multi-frame file: ${seconds} s ` +
          `for 16 frames, ${Number((boundsPerFile * seconds).toFixed(2))} s in all); it is ` +
          'damaged or far more complex than an image needs.',
      );
    }
    const code = (crash as { code?: unknown } | undefined)?.code;
    if (code === 'ERR_WORKER_OUT_OF_MEMORY') {
      return new ImagingRefusal(
        400,
        'too-complex',
        `${label} needed more than ${this.options.memoryLimitMb} MB of memory to read; it is ` +
          'damaged or far more complex than an image needs.',
      );
    }
    // Not the upload's fault as far as anyone can tell: an internal error, logged as such.
    return new Error(`the DICOM reading worker stopped (${code ? String(code) : 'no code'})`);
  }
}
