/**
 * The display body of an assessment (GET /api/assessments/:id/display): what the viewer draws
 * beside the figures — each zone model's zone as a voxel mask on its crop grid, and the tumour
 * surfaces with their local margins for the 3D margin colouring.
 *
 *   bytes 0–7   the ASCII magic `EMBERASM`
 *   bytes 8–11  header length H, uint32 little-endian
 *   bytes 12…   ASCII JSON header (`AssessmentDisplayHeader`), space-padded to 8 bytes
 *   then        the blocks the header lists, each at its `offset` from the end of the header:
 *               masks uint8 (1 inside), i fastest; points float32 LPS mm xyz…; margins float32 mm.
 */
import { z } from 'zod';
import { zoneModels, type ZoneModel } from './assessments';
import { decodeStoredFilePreamble, encodeStoredFilePreamble } from './stored-file-preamble';
import type { VolumeGeometry } from '../geometry/patient-geometry';

export interface DisplayZone {
  model: ZoneModel;
  geometry: VolumeGeometry;
  mask: Uint8Array;
}

export interface DisplayMargins {
  structureId: string;
  /** The zone model the margins were measured against. */
  model: ZoneModel;
  /** Surface points, LPS mm, x y z per point. */
  pointsLps: Float32Array;
  /** Local margin at each point, mm (negative: outside the zone). */
  marginMm: Float32Array;
}

export interface AssessmentDisplay {
  zones: DisplayZone[];
  margins: DisplayMargins[];
}

export const assessmentDisplayMagic = 'EMBERASM';

const finite = z.number().refine(Number.isFinite);
const vec3 = z.tuple([finite, finite, finite]);
const block = z.object({ offset: z.number().int().min(0), byteLength: z.number().int().min(0) });
const headerSchema = z.object({
  format: z.literal('emberline-assessment-display'),
  version: z.literal(1),
  zones: z.array(
    z.object({
      model: z.enum(zoneModels),
      geometry: z.object({
        dimensions: z.tuple([
          z.number().int().positive(),
          z.number().int().positive(),
          z.number().int().positive(),
        ]),
        spacingMm: vec3,
        originLps: vec3,
        direction: z.tuple([vec3, vec3, vec3]),
      }),
      mask: block,
    }),
  ),
  margins: z.array(
    z.object({ structureId: z.string(), model: z.enum(zoneModels), points: block, margins: block }),
  ),
});
export type AssessmentDisplayHeader = z.infer<typeof headerSchema>;

export class AssessmentDisplayError extends Error {
  override readonly name = 'AssessmentDisplayError';
}

/** Blocks start on 4-byte boundaries so float32 views need no copy. */
const align = (offset: number) => (offset + 3) & ~3;

export function encodeAssessmentDisplay(display: AssessmentDisplay): Uint8Array {
  let offset = 0;
  const blocks: Uint8Array[] = [];
  const place = (bytes: Uint8Array) => {
    offset = align(offset);
    const placed = { offset, byteLength: bytes.byteLength };
    blocks.push(bytes);
    offset += bytes.byteLength;
    return placed;
  };
  const header: AssessmentDisplayHeader = {
    format: 'emberline-assessment-display',
    version: 1,
    zones: display.zones.map((zone) => ({
      model: zone.model,
      geometry: zone.geometry,
      mask: place(zone.mask),
    })),
    margins: display.margins.map((entry) => ({
      structureId: entry.structureId,
      model: entry.model,
      points: place(
        new Uint8Array(
          entry.pointsLps.buffer,
          entry.pointsLps.byteOffset,
          entry.pointsLps.byteLength,
        ),
      ),
      margins: place(
        new Uint8Array(entry.marginMm.buffer, entry.marginMm.byteOffset, entry.marginMm.byteLength),
      ),
    })),
  };
  const preamble = encodeStoredFilePreamble(assessmentDisplayMagic, header);
  const body = new Uint8Array(preamble.byteLength + align(offset));
  body.set(preamble, 0);
  let cursor = 0;
  for (const bytes of blocks) {
    cursor = align(cursor);
    body.set(bytes, preamble.byteLength + cursor);
    cursor += bytes.byteLength;
  }
  return body;
}

export function decodeAssessmentDisplay(body: ArrayBuffer | Uint8Array): AssessmentDisplay {
  const bytes = body instanceof Uint8Array ? body : new Uint8Array(body);
  const preamble = decodeStoredFilePreamble(bytes, {
    magic: assessmentDisplayMagic,
    what: 'The assessment display',
    maxHeaderBytes: 1_048_576,
    refuse: (message) => new AssessmentDisplayError(message),
  });
  const parsed = headerSchema.safeParse(preamble.header);
  if (!parsed.success)
    throw new AssessmentDisplayError('The assessment display header is not one.');
  const start = preamble.voxelOffset;
  const slice = (placed: { offset: number; byteLength: number }) => {
    const from = start + placed.offset;
    if (from + placed.byteLength > bytes.byteLength) {
      throw new AssessmentDisplayError('The assessment display is cut short.');
    }
    return bytes.slice(from, from + placed.byteLength);
  };
  const floats = (placed: { offset: number; byteLength: number }) => {
    const copy = slice(placed);
    return new Float32Array(copy.buffer, 0, copy.byteLength / 4);
  };
  return {
    zones: parsed.data.zones.map((zone) => {
      const mask = slice(zone.mask);
      const [nx, ny, nz] = zone.geometry.dimensions;
      if (mask.byteLength !== nx * ny * nz) {
        throw new AssessmentDisplayError('A zone mask does not fill its grid.');
      }
      return { model: zone.model, geometry: zone.geometry as VolumeGeometry, mask };
    }),
    margins: parsed.data.margins.map((entry) => ({
      structureId: entry.structureId,
      model: entry.model,
      pointsLps: floats(entry.points),
      marginMm: floats(entry.margins),
    })),
  };
}
