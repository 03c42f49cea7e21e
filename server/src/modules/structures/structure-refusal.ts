import { structuresProblemTypePrefix } from '@emberline/shared';
import { AppError } from '../../common/errors';

/**
 * Why an import was refused, as a short code: it ends the problem-details `type`
 * (`urn:emberline:problem:structures:<reason>`) and is the audit event's detail. Never a value
 * from the file.
 */
export type StructureRefusalReason =
  | 'multipart'
  | 'no-file'
  | 'too-large'
  | 'gzip'
  | 'not-nifti'
  | 'not-segmentation'
  | 'dicom-transfer-syntax'
  | 'dicom-malformed'
  | 'dicom-truncated'
  | 'dicom-seg-type'
  | 'segments'
  | 'segment-overlap'
  | 'too-complex'
  | 'busy'
  | 'nifti-malformed'
  | 'nifti-truncated'
  | 'nifti-datatype'
  | 'label-values'
  | 'labels'
  | 'empty'
  | 'grid-mismatch';

/** An import refused with a 4xx whose detail says exactly what is wrong. */
export class StructureRefusal extends AppError {
  constructor(
    status: number,
    readonly reason: StructureRefusalReason,
    detail: string,
  ) {
    super(status, titleOf(status), detail, `${structuresProblemTypePrefix}${reason}`);
  }
}

function titleOf(status: number): string {
  switch (status) {
    case 413:
      return 'Upload too large';
    case 415:
      return 'Unsupported label map';
    case 503:
      return 'Busy';
    default:
      return 'Invalid label map';
  }
}
