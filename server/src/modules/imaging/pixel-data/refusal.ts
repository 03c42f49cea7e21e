/**
 * How the codecs refuse a frame: an `InstanceRefusal` (the reading worker's own refusal, which
 * crosses the worker boundary as problem details), never another exception type.
 */
import { InstanceRefusal } from '../dicom-instance-reader';
import type { RefusalReason } from '../imaging-refusal';

export function refuse(status: 400 | 415, reason: RefusalReason, detail: string): never {
  throw new InstanceRefusal({ status, reason, detail });
}

/** A codec's own message, fit to quote in a detail: printable ASCII, one line, short. */
export function quotable(message: string): string {
  const text = message
    .replace(/[^\x20-\x7e]+/g, ' ')
    .replace(/\s+/g, ' ')
    .trim();
  return text.length > 160 ? `${text.slice(0, 157)}...` : text;
}
