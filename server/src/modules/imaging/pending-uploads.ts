/**
 * Uploads that hold several series, waiting for the presenter to choose which to keep, and the
 * progress of uploads being read. Both live in this process's memory only, for minutes: the
 * files are still identifying (they are de-identified when kept), so they are never written to
 * disk or to the database, and whatever is not kept is dropped on discard or expiry. Behind a
 * proxy with several server processes, `POST /api/uploads/:id/keep` must reach the process
 * that read the upload (an upload unknown to a process answers 404, as an expired one does).
 */
import { randomUUID } from 'node:crypto';
import type { UploadProgress, UploadSkippedObject } from '@emberline/shared';
import { ImagingRefusal } from './imaging-refusal';
import type { SortedStudy } from './study-sorting';

export interface PendingUpload {
  id: string;
  caseId: string;
  userId: string;
  expiresAt: Date;
  /** The scanned files' labels and bytes, by entry index (what the candidates point into). */
  files: { label: string; bytes: Uint8Array }[];
  candidates: SortedStudy['candidates'];
  skipped: UploadSkippedObject[];
  byteLength: number;
}

export interface PendingUploadLimits {
  ttlMs: number;
  /** Bytes all pending uploads of this process may hold together. */
  maxBytes: number;
}

export class PendingUploads {
  private readonly uploads = new Map<string, PendingUpload>();
  private readonly sweeper: NodeJS.Timeout;

  constructor(private readonly limits: PendingUploadLimits) {
    this.sweeper = setInterval(() => this.sweep(), Math.min(60_000, limits.ttlMs)).unref();
  }

  /** Holds an upload; 503 when the memory set aside for waiting uploads is taken. */
  add(upload: Omit<PendingUpload, 'id' | 'expiresAt' | 'byteLength'>): PendingUpload {
    this.sweep();
    const byteLength = upload.files.reduce((sum, file) => sum + file.bytes.byteLength, 0);
    if (this.heldBytes() + byteLength > this.limits.maxBytes) {
      throw new ImagingRefusal(
        503,
        'busy',
        'Emberline holds other uploads waiting for a choice; keep or discard them, or try ' +
          'again in a few minutes.',
      );
    }
    const pending: PendingUpload = {
      ...upload,
      id: randomUUID(),
      expiresAt: new Date(Date.now() + this.limits.ttlMs),
      byteLength,
    };
    this.uploads.set(pending.id, pending);
    return pending;
  }

  /** The user's own upload that has not expired, else undefined. */
  find(id: string, userId: string): PendingUpload | undefined {
    const upload = this.uploads.get(id);
    if (!upload || upload.userId !== userId) return undefined;
    if (upload.expiresAt.getTime() <= Date.now()) {
      this.uploads.delete(id);
      return undefined;
    }
    return upload;
  }

  remove(id: string): void {
    this.uploads.delete(id);
  }

  /** Bytes held by every waiting upload together. */
  heldBytes(): number {
    let total = 0;
    for (const upload of this.uploads.values()) total += upload.byteLength;
    return total;
  }

  close(): void {
    clearInterval(this.sweeper);
    this.uploads.clear();
  }

  private sweep(): void {
    const now = Date.now();
    for (const [id, upload] of this.uploads) {
      if (upload.expiresAt.getTime() <= now) this.uploads.delete(id);
    }
  }
}

/**
 * Progress of uploads and keeps, by the token the client sent, readable by the same user only,
 * and forgotten ten minutes after its last change: a token another user holds is not taken over.
 */
export class UploadProgressBoard {
  private readonly entries = new Map<
    string,
    { userId: string; progress: UploadProgress; at: number }
  >();
  private static readonly keepMs = 10 * 60_000;

  set(token: string | undefined, userId: string, progress: UploadProgress): void {
    if (!token) return;
    this.forgetOld();
    const held = this.entries.get(token);
    if (held && held.userId !== userId) return;
    this.entries.set(token, { userId, progress, at: Date.now() });
  }

  update(
    token: string | undefined,
    userId: string,
    change: (progress: UploadProgress) => void,
  ): void {
    if (!token) return;
    const entry = this.entries.get(token);
    if (!entry || entry.userId !== userId) return;
    change(entry.progress);
    entry.at = Date.now();
  }

  get(token: string, userId: string): UploadProgress | undefined {
    this.forgetOld();
    const entry = this.entries.get(token);
    return entry && entry.userId === userId ? entry.progress : undefined;
  }

  private forgetOld(): void {
    const cutoff = Date.now() - UploadProgressBoard.keepMs;
    for (const [token, entry] of this.entries) if (entry.at < cutoff) this.entries.delete(token);
  }
}
