/** What a frame should be (from the DICOM header), what a codec gives back, and the check between them. */
import { refuse } from './refusal';

export interface FrameLayout {
  rows: number;
  columns: number;
  bitsAllocated: 8 | 16;
  bitsStored: number;
  isSigned: boolean;
  /** "File 3": how messages name the file. */
  label: string;
}

export interface DecodedFrame {
  /**
   * rows × columns stored values, row by row, as the codec produced them (Uint8Array,
   * Uint16Array or Int16Array); the caller masks to Bits Stored and sign-extends.
   */
  values: Uint8Array | Uint16Array | Int16Array;
  /**
   * true when the codestream itself shows a lossy coding (JPEG-LS NEAR > 0, JPEG 2000
   * irreversible wavelet), false when it shows lossless, null when it does not say.
   */
  isLossy: boolean | null;
}

/** What a codestream's own header says of the image. */
export interface CodestreamShape {
  rows: number;
  columns: number;
  components: number;
  precision: number;
  /** JPEG 2000 says whether samples are signed; JPEG and JPEG-LS do not (null). */
  isSigned: boolean | null;
}

/**
 * Refuses a codestream whose image is not the one the header describes: run before decoding
 * (so a damaged header cannot make a decoder allocate for a huge image) and after.
 */
export function checkShape(shape: CodestreamShape, layout: FrameLayout, what: string): void {
  const { label } = layout;
  if (shape.components !== 1) {
    refuse(
      415,
      'pixel-format',
      `${label}: its ${what} codestream holds ${shape.components} components; Emberline reads ` +
        'greyscale images, one component.',
    );
  }
  if (shape.rows !== layout.rows || shape.columns !== layout.columns) {
    refuse(
      400,
      'malformed',
      `${label}: its ${what} codestream is ${shape.columns} columns × ${shape.rows} rows, but ` +
        `Columns (0028,0011) and Rows (0028,0010) say ${layout.columns} × ${layout.rows}.`,
    );
  }
  if (!(shape.precision >= 1 && shape.precision <= layout.bitsAllocated)) {
    refuse(
      400,
      'malformed',
      `${label}: its ${what} codestream has ${shape.precision}-bit samples, which do not fit ` +
        `Bits Allocated (0028,0100) ${layout.bitsAllocated}.`,
    );
  }
  if (shape.isSigned === true && !layout.isSigned) {
    refuse(
      400,
      'malformed',
      `${label}: its ${what} codestream holds signed samples, but Pixel Representation ` +
        '(0028,0103) says the pixels are unsigned.',
    );
  }
  // A bit pattern narrower than Bits Stored puts the sign bit of signed pixels lower than the
  // header says: which reading was meant cannot be told, so none is guessed.
  if (layout.isSigned && shape.isSigned !== true && shape.precision < layout.bitsStored) {
    refuse(
      415,
      'pixel-format',
      `${label}: its ${what} codestream holds ${shape.precision}-bit samples of signed pixels ` +
        `whose Bits Stored (0028,0101) is ${layout.bitsStored}; where their sign bit lies is ` +
        'ambiguous.',
    );
  }
}
