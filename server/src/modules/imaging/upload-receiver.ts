/**
 * Receives a multipart upload (field `files`) into memory with multer, every limit set, and a
 * cap on the bytes of all files together that multer alone does not have. Nothing touches the
 * disk here, so an aborted or refused upload leaves nothing behind: its buffers are garbage.
 */
import type { Request, Response } from 'express';
import multer, { MulterError, type StorageEngine } from 'multer';
import { ImagingRefusal } from './imaging-refusal';

export interface UploadLimits {
  maxFiles: number;
  /** Bytes of all files of one upload together, as sent (a .zip counts compressed). */
  maxUploadBytes: number;
}

export const uploadFieldName = 'files';

/** Room the multipart framing takes beyond the files themselves. */
const framingBytesPerFile = 4096;
const textFieldLimits = { fields: 4, fieldSize: 1024, fieldNameSize: 100 };

function megabytes(bytes: number): string {
  return `${(bytes / 1_048_576).toFixed(1)} MB`;
}

function tooLarge(limits: UploadLimits): ImagingRefusal {
  return new ImagingRefusal(
    413,
    'too-large',
    `The upload is larger than ${megabytes(limits.maxUploadBytes)}, the most one upload may hold.`,
  );
}

/**
 * multer's memory storage, bounded by the total of the request, each file in an ArrayBuffer of
 * its own (so that it can be transferred to a worker thread without a copy).
 */
function boundedMemoryStorage(limits: UploadLimits): StorageEngine {
  const receivedBytes = new WeakMap<Request, number>();
  return {
    _handleFile(request, file, callback) {
      const chunks: Buffer[] = [];
      let size = 0;
      let isSettled = false;
      const settle = (error: Error | null, info?: Partial<Express.Multer.File>) => {
        if (isSettled) return;
        isSettled = true;
        file.stream.removeListener('data', onData);
        callback(error, info);
      };
      const onData = (chunk: Buffer) => {
        const total = (receivedBytes.get(request) ?? 0) + chunk.length;
        receivedBytes.set(request, total);
        if (total > limits.maxUploadBytes) {
          chunks.length = 0;
          file.stream.resume();
          settle(tooLarge(limits));
          return;
        }
        chunks.push(chunk);
        size += chunk.length;
      };
      file.stream.on('data', onData);
      file.stream.on('error', (error: Error) => settle(error));
      file.stream.on('end', () => {
        const whole = new Uint8Array(new ArrayBuffer(size));
        let offset = 0;
        for (const chunk of chunks) {
          whole.set(chunk, offset);
          offset += chunk.length;
        }
        chunks.length = 0;
        settle(null, { buffer: Buffer.from(whole.buffer), size });
      });
    },
    _removeFile(_request, file, callback) {
      file.buffer = Buffer.alloc(0);
      callback(null);
    },
  };
}

function sanitizedField(value: string | undefined): string {
  return (value ?? '').replace(/[^\w.-]/g, '').slice(0, 40) || '(unnamed)';
}

function refusalOfMulterError(error: MulterError, limits: UploadLimits): ImagingRefusal {
  const refusal = (detail: string) => new ImagingRefusal(400, 'multipart', detail);
  switch (error.code) {
    case 'LIMIT_FILE_COUNT':
    case 'LIMIT_PART_COUNT':
      return new ImagingRefusal(
        413,
        'too-many-files',
        `The upload holds more than ${limits.maxFiles} files; it may hold at most ` +
          `${limits.maxFiles}.`,
      );
    case 'LIMIT_FILE_SIZE':
      return tooLarge(limits);
    case 'LIMIT_UNEXPECTED_FILE':
      return refusal(
        `A file came in the form field "${sanitizedField(error.field)}"; send the DICOM files ` +
          `(or one .zip) in the field "${uploadFieldName}".`,
      );
    case 'LIMIT_FIELD_COUNT':
      return refusal(`The form holds more than ${textFieldLimits.fields} text fields.`);
    case 'LIMIT_FIELD_VALUE':
      return refusal(`A text field of the form is longer than ${textFieldLimits.fieldSize} bytes.`);
    case 'LIMIT_FIELD_KEY':
      return refusal(`A form field name is longer than ${textFieldLimits.fieldNameSize} bytes.`);
    default:
      return refusal('The form has a field Emberline does not accept.');
  }
}

/** Busboy's and the request's own failures, by their fixed messages. */
function refusalOfStreamError(error: Error): ImagingRefusal {
  const detail = /aborted|closed/i.test(error.message)
    ? 'The upload was interrupted before it ended.'
    : /boundary/i.test(error.message)
      ? 'The Content-Type names no multipart boundary.'
      : /unexpected end/i.test(error.message)
        ? 'The multipart body ended before its last part did.'
        : 'The multipart body is malformed.';
  return new ImagingRefusal(400, 'multipart', detail);
}

/** Reads the upload's files into memory; throws an ImagingRefusal with a 4xx otherwise. */
export async function receiveUpload(
  request: Request,
  response: Response,
  limits: UploadLimits,
): Promise<{ name: string; bytes: Uint8Array }[]> {
  const declaredBytes = Number(request.get('content-length') ?? NaN);
  if (declaredBytes > limits.maxUploadBytes + framingBytesPerFile * (limits.maxFiles + 1)) {
    // Refused before a byte of it is read: close the connection rather than drain the body.
    response.set('Connection', 'close');
    throw tooLarge(limits);
  }
  if (!request.is('multipart/form-data')) {
    response.set('Connection', 'close');
    throw new ImagingRefusal(
      415,
      'multipart',
      `Send the series as multipart/form-data, the DICOM files (or one .zip) in the field ` +
        `"${uploadFieldName}".`,
    );
  }
  const middleware = multer({
    storage: boundedMemoryStorage(limits),
    // A folder's files come with their relative paths (a DICOMDIR names files by path).
    preservePath: true,
    limits: {
      files: limits.maxFiles,
      fileSize: limits.maxUploadBytes,
      parts: limits.maxFiles + textFieldLimits.fields,
      fields: textFieldLimits.fields,
      fieldSize: textFieldLimits.fieldSize,
      fieldNameSize: textFieldLimits.fieldNameSize,
      fieldNestingDepth: 0,
      fieldArrayIndexLimit: 0,
      headerPairs: 100,
    },
  }).array(uploadFieldName);
  await new Promise<void>((resolve, reject) => {
    middleware(request, response, (error?: unknown) => {
      if (!error) resolve();
      else if (error instanceof ImagingRefusal) reject(error);
      else if (error instanceof MulterError) reject(refusalOfMulterError(error, limits));
      else if (error instanceof Error) reject(refusalOfStreamError(error));
      else reject(new ImagingRefusal(400, 'multipart', 'The multipart body is malformed.'));
    });
  });
  const files = Array.isArray(request.files) ? request.files : [];
  if (files.length === 0) {
    throw new ImagingRefusal(
      400,
      'no-files',
      `The upload holds no files: send the DICOM files (or one .zip) in the field ` +
        `"${uploadFieldName}".`,
    );
  }
  return files.map((file) => ({
    name: relativePath(file.originalname),
    bytes: new Uint8Array(file.buffer.buffer, file.buffer.byteOffset, file.size),
  }));
}

/** A sent file name as a relative path: '/' separators, no leading '/', no '..' or '.' parts. */
function relativePath(name: string | undefined): string {
  return (name ?? '')
    .replace(/\\/g, '/')
    .split('/')
    .filter((part) => part !== '' && part !== '.' && part !== '..')
    .join('/')
    .slice(0, 512);
}
