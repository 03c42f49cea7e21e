/**
 * The display data of an assessment (zone masks and tumour-surface margins, encoded by the
 * engine's display codec in shared/) kept as one file per assessment in the file store.
 */
import type { RehearsalReplay } from '@emberline/shared';
import type { FileStore } from '../imaging/file-store';

export class AssessmentDisplayStore {
  constructor(private readonly store: FileStore) {}

  keyOf(assessmentId: string): string {
    return `assessments/${assessmentId}.display`;
  }

  async write(assessmentId: string, body: ArrayBuffer): Promise<void> {
    await this.store.writeAtomically(this.keyOf(assessmentId), [new Uint8Array(body)]);
  }

  openRead(assessmentId: string) {
    return this.store.openRead(this.keyOf(assessmentId));
  }

  async remove(assessmentId: string): Promise<void> {
    await this.store.remove(this.keyOf(assessmentId));
    await this.store.remove(this.replayKeyOf(assessmentId)).catch(() => undefined);
  }

  /** The insertion rehearsal's replays (JSON), beside the display data. */
  replayKeyOf(assessmentId: string): string {
    return `assessments/${assessmentId}.replay`;
  }

  async writeReplays(assessmentId: string, replays: RehearsalReplay[]): Promise<void> {
    const body = new TextEncoder().encode(JSON.stringify(replays));
    await this.store.writeAtomically(this.replayKeyOf(assessmentId), [body]);
  }

  openReplays(assessmentId: string) {
    return this.store.openRead(this.replayKeyOf(assessmentId));
  }
}
