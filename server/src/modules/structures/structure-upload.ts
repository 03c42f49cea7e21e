/**
 * Receives a label map import (multipart: the file in `file`, the optional JSON in `labels`)
 * into memory with multer, every limit set. Nothing touches the disk here.
 */
import type { Request, Response } from 'express';
import multer, { MulterError } from 'multer';
import { StructureRefusal } from './structure-refusal';

export const labelMapFieldName = 'file';
export const labelsFieldName = 'labels';

/** `labels` maps at most 65 535 values to a kind; 256 KiB is ample for any real one. */
const maxLabelsFieldBytes = 262_144;

export interface ReceivedImport {
  file: Uint8Array;
  /** The `labels` field as sent, or undefined without one. */
  labelsText: string | undefined;
}

function refusalOfMulterError(error: MulterError, maxUploadBytes: number): StructureRefusal {
  const refusal = (detail: string) => new StructureRefusal(400, 'multipart', detail);
  switch (error.code) {
    case 'LIMIT_FILE_SIZE':
      return new StructureRefusal(
        413,
        'too-large',
        `The label map is larger than ${maxUploadBytes} bytes, the most one import may hold.`,
      );
    case 'LIMIT_FILE_COUNT':
    case 'LIMIT_PART_COUNT':
      return refusal(`Send one label map, in the field "${labelMapFieldName}".`);
    case 'LIMIT_UNEXPECTED_FILE':
      return refusal(`Send the label map in the field "${labelMapFieldName}".`);
    case 'LIMIT_FIELD_VALUE':
      return refusal(`The field "${labelsFieldName}" is longer than ${maxLabelsFieldBytes} bytes.`);
    default:
      return refusal(
        `The form may hold the field "${labelMapFieldName}" (a file) and the field ` +
          `"${labelsFieldName}" (JSON), nothing else.`,
      );
  }
}

/** Reads the import into memory; throws a StructureRefusal with a 4xx otherwise. */
export async function receiveImport(
  request: Request,
  response: Response,
  maxUploadBytes: number,
): Promise<ReceivedImport> {
  const declaredBytes = Number(request.get('content-length') ?? NaN);
  if (declaredBytes > maxUploadBytes + maxLabelsFieldBytes + 65_536) {
    response.set('Connection', 'close');
    throw new StructureRefusal(
      413,
      'too-large',
      `The label map is larger than ${maxUploadBytes} bytes, the most one import may hold.`,
    );
  }
  if (!request.is('multipart/form-data')) {
    response.set('Connection', 'close');
    throw new StructureRefusal(
      415,
      'multipart',
      `Send the label map as multipart/form-data, the file in the field "${labelMapFieldName}".`,
    );
  }
  const middleware = multer({
    storage: multer.memoryStorage(),
    limits: {
      files: 1,
      fileSize: maxUploadBytes,
      parts: 2,
      fields: 1,
      fieldSize: maxLabelsFieldBytes,
      fieldNameSize: 100,
      fieldNestingDepth: 0,
      fieldArrayIndexLimit: 0,
      headerPairs: 100,
    },
  }).single(labelMapFieldName);
  await new Promise<void>((resolve, reject) => {
    middleware(request, response, (error?: unknown) => {
      if (!error) resolve();
      else if (error instanceof MulterError) reject(refusalOfMulterError(error, maxUploadBytes));
      else reject(new StructureRefusal(400, 'multipart', 'The multipart body is malformed.'));
    });
  });
  const body: unknown = request.body;
  const fields = typeof body === 'object' && body !== null ? (body as Record<string, unknown>) : {};
  const unexpected = Object.keys(fields).find((name) => name !== labelsFieldName);
  if (unexpected !== undefined) {
    throw new StructureRefusal(
      400,
      'multipart',
      `The form may hold the field "${labelMapFieldName}" (a file) and the field ` +
        `"${labelsFieldName}" (JSON), nothing else.`,
    );
  }
  const labels = fields[labelsFieldName];
  const file = request.file;
  if (!file) {
    throw new StructureRefusal(
      400,
      'no-file',
      `The import holds no file: send the label map (.nii or .nii.gz) in the field ` +
        `"${labelMapFieldName}".`,
    );
  }
  return {
    file: new Uint8Array(file.buffer.buffer, file.buffer.byteOffset, file.size),
    labelsText: typeof labels === 'string' ? labels : undefined,
  };
}
