/**
 * Enhanced CT Image Storage (one file, many frames) read through the functional groups: the
 * invented sample CT's slices are rebuilt with dcmjs into one Enhanced CT file, its geometry in
 * the Shared (orientation, pixel measures, pixel value transformation) and Per-frame (plane
 * position) Functional Groups Sequences (DICOM PS3.3 C.7.6.16, A.38.1), and uploaded beside
 * the single-frame series it came from: the two volumes must match in geometry and voxel for
 * voxel, frames stored in order or reversed.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import dcmjs from 'dcmjs';
import type { ImageSeriesView } from '@emberline/shared';
import { generateAbdomenCt } from '../../sample-data/generate-abdomen-ct';
import { originalUid, uploadFiles } from './imaging-fixtures';
import { useImagingTestApp, volumeOf } from './imaging-test-app';

dcmjs.log.setLevel('error');
const { DicomMessage, DicomMetaDictionary, DicomDict } = dcmjs.data;

const context = useImagingTestApp(
  'imaging-enhanced',
  'imaging-enhanced-secret-7c2e9a4b1d6f3a8e5c0b',
);
let slices: Uint8Array[];

beforeAll(() => {
  // The committed sample grid, 20 slices of it: enough frames, a quick test.
  slices = generateAbdomenCt({ noiseStandardDeviationHu: 0 })
    .slices.slice(20, 40)
    .map((slice) => new Uint8Array(slice));
});

type Natural = Record<string, unknown>;

function naturalOf(file: Uint8Array): Natural {
  const buffer = file.buffer.slice(file.byteOffset, file.byteOffset + file.byteLength);
  return DicomMetaDictionary.naturalizeDataset(DicomMessage.readFile(buffer).dict) as Natural;
}

/** One Enhanced CT file holding the slices as frames, in the order given. */
function enhancedCt(
  files: Uint8Array[],
  options: { dropPositionOfFrame?: number; perFrameRescale?: boolean } = {},
): Uint8Array {
  const natural = files.map(naturalOf);
  const [first] = natural;
  const frameBytes = (first.Rows as number) * (first.Columns as number) * 2;
  const pixels = new Uint8Array(frameBytes * natural.length);
  natural.forEach((slice, index) => {
    const data = new Uint8Array((slice.PixelData as ArrayBuffer[])[0]);
    pixels.set(data.subarray(0, frameBytes), index * frameBytes);
    if (options.perFrameRescale) {
      // Frame k stores value − k and says intercept −1024 + k: the same HU, another transformation.
      const values = new Int16Array(pixels.buffer, index * frameBytes, frameBytes / 2);
      for (let at = 0; at < values.length; at++) values[at] -= index;
    }
  });
  const sopInstanceUid = originalUid();
  const dataset: Natural = {
    SOPClassUID: '1.2.840.10008.5.1.4.1.1.2.1',
    SOPInstanceUID: sopInstanceUid,
    Modality: 'CT',
    ImageType: ['ORIGINAL', 'PRIMARY', 'AXIAL', 'NONE'],
    StudyInstanceUID: first.StudyInstanceUID,
    SeriesInstanceUID: originalUid(),
    SeriesNumber: 7,
    FrameOfReferenceUID: first.FrameOfReferenceUID,
    Rows: first.Rows,
    Columns: first.Columns,
    SamplesPerPixel: 1,
    PhotometricInterpretation: 'MONOCHROME2',
    BitsAllocated: first.BitsAllocated,
    BitsStored: first.BitsStored,
    HighBit: first.HighBit,
    PixelRepresentation: first.PixelRepresentation,
    NumberOfFrames: natural.length,
    SharedFunctionalGroupsSequence: [
      {
        PlaneOrientationSequence: [{ ImageOrientationPatient: first.ImageOrientationPatient }],
        PixelMeasuresSequence: [
          { PixelSpacing: first.PixelSpacing, SliceThickness: first.SliceThickness },
        ],
        PixelValueTransformationSequence: [
          {
            RescaleIntercept: first.RescaleIntercept,
            RescaleSlope: first.RescaleSlope,
            RescaleType: 'HU',
          },
        ],
      },
    ],
    PerFrameFunctionalGroupsSequence: natural.map((slice, index) => ({
      ...(index === options.dropPositionOfFrame
        ? {}
        : { PlanePositionSequence: [{ ImagePositionPatient: slice.ImagePositionPatient }] }),
      FrameContentSequence: [{ InStackPositionNumber: index + 1 }],
      // The Per-frame item wins over the Shared one (PS3.3 C.7.6.16).
      ...(options.perFrameRescale
        ? {
            PixelValueTransformationSequence: [
              {
                RescaleIntercept: Number(first.RescaleIntercept) + index,
                RescaleSlope: first.RescaleSlope,
                RescaleType: 'HU',
              },
            ],
          }
        : {}),
    })),
    PixelData: [pixels.buffer],
    _vrMap: { PixelData: 'OW' },
  };
  const meta = DicomMetaDictionary.denaturalizeDataset({
    FileMetaInformationVersion: new Uint8Array([0, 1]).buffer,
    MediaStorageSOPClassUID: '1.2.840.10008.5.1.4.1.1.2.1',
    MediaStorageSOPInstanceUID: sopInstanceUid,
    TransferSyntaxUID: '1.2.840.10008.1.2.1',
    ImplementationClassUID: '1.2.826.0.1.3680043.10.99999.1',
  });
  const dict = new DicomDict(meta);
  dict.dict = DicomMetaDictionary.denaturalizeDataset(dataset);
  return new Uint8Array(dict.write());
}

const presenter = () => context.signIn();

describe('Enhanced CT Image Storage', () => {
  it.each([
    ['frames in slice order', false, false],
    ['frames reversed', true, false],
    ['each frame with its own Pixel Value Transformation', false, true],
  ])(
    'reads %s to the geometry and voxels of the single-frame series',
    async (_name, reversed, perFrameRescale) => {
      const client = await presenter();
      const classic = await uploadFiles(client, context.ids.northDraft, slices);
      expect(classic.status, JSON.stringify(classic.body)).toBe(201);
      const frames = reversed ? [...slices].reverse() : slices;
      const enhanced = await uploadFiles(
        client,
        context.ids.northDraft,
        [enhancedCt(frames, { perFrameRescale })],
        () => 'ENHANCED',
      );
      expect(enhanced.status, JSON.stringify(enhanced.body)).toBe(201);
      const a = classic.body as ImageSeriesView;
      const b = enhanced.body as ImageSeriesView;
      expect(b.sliceCount).toBe(20);
      for (const key of [
        'dimensions',
        'spacingMm',
        'originLps',
        'orientation',
        'valueRange',
      ] as const) {
        expect(b[key], key).toEqual(a[key]);
      }
      const [first, second] = [await volumeOf(client, a), await volumeOf(client, b)];
      expect(second.header.dimensions).toEqual(first.header.dimensions);
      let differing = 0;
      for (let index = 0; index < first.voxels.length; index++) {
        if (first.voxels[index] !== second.voxels[index]) differing += 1;
      }
      expect(differing).toBe(0);
    },
    60_000,
  );

  it('refuses a frame without its plane position, naming the file and the frame', async () => {
    const client = await presenter();
    const response = await uploadFiles(
      client,
      context.ids.northDraft,
      [enhancedCt(slices, { dropPositionOfFrame: 4 })],
      () => 'ENHANCED',
    );
    expect(response.status).toBe(400);
    expect((response.body as { detail: string }).detail).toMatch(
      /File 1 \(ENHANCED\): frame 5 lacks the Plane Position \(Patient\) functional group/,
    );
  });
});
