import { imagingProblemTypePrefix } from '@emberline/shared';
import { AppError } from '../../common/errors';

/**
 * Why an upload was refused, as a short code: it ends the problem-details `type`
 * (`urn:emberline:problem:imaging:<reason>`) and is the audit event's detail. Never a value
 * from the files.
 */
export type RefusalReason =
  | 'multipart'
  | 'no-files'
  | 'too-many-files'
  | 'too-large'
  | 'zip'
  | 'not-dicom'
  | 'dicomdir'
  | 'transfer-syntax'
  | 'malformed'
  | 'truncated'
  | 'too-complex'
  | 'pixel-format'
  | 'value-range'
  | 'modality'
  | 'multi-frame'
  | 'burned-in-annotation'
  | 'several-series'
  | 'inconsistent-series'
  | 'duplicate-instance'
  | 'duplicate-series'
  | `geometry:${string}`
  | 'busy'
  | 'cancelled';

/** What a refusal carries across the worker boundary. */
export interface RefusalPayload {
  status: number;
  reason: RefusalReason;
  detail: string;
}

/** An upload refused with a 4xx (or 503 when busy) whose detail says exactly what is wrong. */
export class ImagingRefusal extends AppError {
  constructor(
    status: number,
    readonly reason: RefusalReason,
    detail: string,
  ) {
    super(status, titleOf(status), detail, `${imagingProblemTypePrefix}${reason}`);
  }

  static from(payload: RefusalPayload): ImagingRefusal {
    return new ImagingRefusal(payload.status, payload.reason, payload.detail);
  }
}

function titleOf(status: number): string {
  switch (status) {
    case 413:
      return 'Upload too large';
    case 415:
      return 'Unsupported image data';
    case 409:
      return 'Conflict';
    case 503:
      return 'Busy';
    default:
      return 'Invalid image data';
  }
}
