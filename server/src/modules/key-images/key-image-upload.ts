/**
 * Receives a key image (multipart: the PNG in `image`, the JSON description in `meta`) into
 * memory with multer, every limit set. Nothing touches the disk here.
 */
import type { Request, Response } from 'express';
import multer, { MulterError } from 'multer';
import { keyImageLimits } from '@emberline/shared';
import { AppError, ValidationError } from '../../common/errors';

export const imageFieldName = 'image';
export const metaFieldName = 'meta';

/** The description: a caption of 200 characters and a bounded view state fit well within it. */
const maxMetaBytes = 16_384;

const tooLarge = () =>
  new AppError(
    413,
    'Payload too large',
    `image: the picture is larger than ${keyImageLimits.maxBytes} bytes, the most a key image may hold.`,
  );

const refusal = (message: string, path = '(body)') =>
  new ValidationError(`${path}: ${message}`, [{ path, message }]);

const formRule =
  `Send multipart/form-data with the field "${imageFieldName}" (a PNG file) and the field ` +
  `"${metaFieldName}" (JSON), nothing else.`;

function refusalOfMulterError(error: MulterError): AppError {
  switch (error.code) {
    case 'LIMIT_FILE_SIZE':
      return tooLarge();
    case 'LIMIT_FIELD_VALUE':
      return refusal(`the field is longer than ${maxMetaBytes} bytes.`, metaFieldName);
    default:
      return refusal(formRule);
  }
}

export interface ReceivedKeyImage {
  png: Uint8Array;
  metaText: string;
}

/** Reads the form into memory; throws a 400, 413 or 415 saying what is wrong otherwise. */
export async function receiveKeyImage(
  request: Request,
  response: Response,
): Promise<ReceivedKeyImage> {
  const declaredBytes = Number(request.get('content-length') ?? NaN);
  if (declaredBytes > keyImageLimits.maxBytes + maxMetaBytes + 65_536) {
    response.set('Connection', 'close');
    throw tooLarge();
  }
  if (!request.is('multipart/form-data')) {
    response.set('Connection', 'close');
    throw new AppError(415, 'Unsupported media type', formRule);
  }
  const middleware = multer({
    storage: multer.memoryStorage(),
    limits: {
      files: 1,
      fileSize: keyImageLimits.maxBytes,
      parts: 2,
      fields: 1,
      fieldSize: maxMetaBytes,
      fieldNameSize: 100,
      headerPairs: 100,
    },
  }).single(imageFieldName);
  await new Promise<void>((resolve, reject) => {
    middleware(request, response, (error?: unknown) => {
      if (!error) resolve();
      else if (error instanceof MulterError) reject(refusalOfMulterError(error));
      else reject(refusal('the multipart body is malformed.'));
    });
  });
  const body: unknown = request.body;
  const fields = typeof body === 'object' && body !== null ? (body as Record<string, unknown>) : {};
  if (Object.keys(fields).some((name) => name !== metaFieldName)) throw refusal(formRule);
  const file = request.file;
  if (!file) throw refusal('send the picture (a PNG) in this field.', imageFieldName);
  const meta = fields[metaFieldName];
  if (typeof meta !== 'string') {
    throw refusal('send the description (JSON) in this field.', metaFieldName);
  }
  return {
    png: new Uint8Array(file.buffer.buffer, file.buffer.byteOffset, file.size),
    metaText: meta,
  };
}
