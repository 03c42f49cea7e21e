/**
 * Writes the invented CT as DICOM Part 10 files with dcmjs, one CT Image Storage instance a
 * slice, Explicit VR Little Endian. Pixels are signed 16-bit (Pixel Representation 1) holding
 * HU + 1024 — Rescale Slope 1, Rescale Intercept −1024 — and since HU are clamped to
 * −1024…3071 the stored values lie in 0…4095. Pure: bytes in memory, nothing on disk.
 */
// dcmjs has no types; the reference makes its declaration part of every program importing this.
// eslint-disable-next-line @typescript-eslint/triple-slash-reference
/// <reference path="./dcmjs-module.d.ts" />
import dcmjs from 'dcmjs';
import { COLUMN_DIRECTION, ROW_DIRECTION, voxelCentreLps, type CtGrid } from './grid';
import type { SeriesUids } from './uids';

/** A naturalised dcmjs data set: attribute keywords to values. */
type NaturalDataset = Record<string, unknown>;
/** A dcmjs data set keyed by tag ("GGGGEEEE"), in the DICOM JSON model (PS3.18 F.2). */
type TaggedDataset = Record<string, { vr: string; Value?: unknown[]; InlineBinary?: string }>;

/** The parts of dcmjs' `data` namespace used here. */
interface DcmjsData {
  DicomMetaDictionary: { denaturalizeDataset(dataset: NaturalDataset): TaggedDataset };
  DicomDict: new (meta: TaggedDataset) => { dict: TaggedDataset; write(): ArrayBuffer };
}

const dcmjsData: DcmjsData = dcmjs.data;

/** CT Image Storage (DICOM PS3.4 B.5). */
export const CT_IMAGE_STORAGE = '1.2.840.10008.5.1.4.1.1.2';
/** Explicit VR Little Endian (DICOM PS3.5 A.2). */
export const EXPLICIT_VR_LITTLE_ENDIAN = '1.2.840.10008.1.2.1';
/** Stored value = HU − RESCALE_INTERCEPT_HU. */
export const RESCALE_INTERCEPT_HU = -1024;

/** Who the invented patient is: values chosen to be plainly fake, for de-identification. */
export const INVENTED_PATIENT = {
  patientName: 'EMBERLINE^DEMO',
  patientId: 'DEMO-0001',
  patientBirthDate: '19610101',
  patientSex: 'O',
  referringPhysicianName: 'EMBERLINE^REFERRER',
  institutionName: 'Emberline Demo Hospital (invented)',
  accessionNumber: 'DEMO-ACC-0001',
  studyId: 'DEMO1',
  studyDate: '20250301',
  studyTime: '093000',
} as const;

export interface CtSeriesInput {
  grid: Readonly<CtGrid>;
  /** HU of every voxel, i fastest, then j, then k; whole numbers within −1024…3071. */
  hu: Int16Array;
  uids: SeriesUids;
}

/** One DICOM Part 10 file (128-byte preamble, "DICM", file meta, data set) a slice, k order. */
export function writeCtSeries(input: CtSeriesInput): ArrayBuffer[] {
  const { grid, hu, uids } = input;
  const pixelsPerSlice = grid.columns * grid.rows;
  return Array.from({ length: grid.slices }, (_, k) => {
    const pixelData = new ArrayBuffer(pixelsPerSlice * 2);
    const view = new DataView(pixelData);
    for (let pixel = 0; pixel < pixelsPerSlice; pixel++) {
      view.setInt16(pixel * 2, hu[k * pixelsPerSlice + pixel] - RESCALE_INTERCEPT_HU, true);
    }
    return writeSlice(grid, uids, k, pixelData);
  });
}

function writeSlice(
  grid: Readonly<CtGrid>,
  uids: SeriesUids,
  k: number,
  pixelData: ArrayBuffer,
): ArrayBuffer {
  const sopInstanceUid = uids.sopInstanceUids[k];
  const meta = dcmjsData.DicomMetaDictionary.denaturalizeDataset({
    FileMetaInformationVersion: new Uint8Array([0, 1]).buffer,
    MediaStorageSOPClassUID: CT_IMAGE_STORAGE,
    MediaStorageSOPInstanceUID: sopInstanceUid,
    TransferSyntaxUID: EXPLICIT_VR_LITTLE_ENDIAN,
    ImplementationClassUID: uids.implementationClassUid,
    ImplementationVersionName: 'EMBERLINE_SD_1',
  });
  const positionLps = voxelCentreLps(grid, 0, 0, k);
  const patient = INVENTED_PATIENT;
  const dataset: NaturalDataset = {
    SpecificCharacterSet: 'ISO_IR 100',
    ImageType: ['ORIGINAL', 'PRIMARY', 'AXIAL'],
    SOPClassUID: CT_IMAGE_STORAGE,
    SOPInstanceUID: sopInstanceUid,
    StudyDate: patient.studyDate,
    SeriesDate: patient.studyDate,
    ContentDate: patient.studyDate,
    StudyTime: patient.studyTime,
    SeriesTime: patient.studyTime,
    ContentTime: patient.studyTime,
    SyntheticData: 'YES',
    AccessionNumber: patient.accessionNumber,
    Modality: 'CT',
    Manufacturer: 'Emberline sample-data generator',
    InstitutionName: patient.institutionName,
    ReferringPhysicianName: patient.referringPhysicianName,
    StudyDescription: 'Invented abdominal CT (Emberline sample data)',
    SeriesDescription: 'Portal-venous phase, 2.5 mm, invented',
    PatientName: patient.patientName,
    PatientID: patient.patientId,
    PatientBirthDate: patient.patientBirthDate,
    PatientSex: patient.patientSex,
    BodyPartExamined: 'ABDOMEN',
    SliceThickness: decimalString(grid.sliceSpacingMm),
    KVP: '120',
    SpacingBetweenSlices: decimalString(grid.sliceSpacingMm),
    PatientPosition: 'HFS',
    StudyInstanceUID: uids.studyInstanceUid,
    SeriesInstanceUID: uids.seriesInstanceUid,
    StudyID: patient.studyId,
    SeriesNumber: '1',
    AcquisitionNumber: '1',
    InstanceNumber: String(k + 1),
    ImagePositionPatient: positionLps.map(decimalString),
    ImageOrientationPatient: [...ROW_DIRECTION, ...COLUMN_DIRECTION].map(decimalString),
    FrameOfReferenceUID: uids.frameOfReferenceUid,
    PositionReferenceIndicator: '',
    SliceLocation: decimalString(positionLps[2]),
    SamplesPerPixel: 1,
    PhotometricInterpretation: 'MONOCHROME2',
    Rows: grid.rows,
    Columns: grid.columns,
    PixelSpacing: [grid.rowSpacingMm, grid.columnSpacingMm].map(decimalString),
    BitsAllocated: 16,
    BitsStored: 16,
    HighBit: 15,
    PixelRepresentation: 1,
    BurnedInAnnotation: 'NO',
    WindowCenter: '40',
    WindowWidth: '400',
    RescaleIntercept: decimalString(RESCALE_INTERCEPT_HU),
    RescaleSlope: '1',
    RescaleType: 'HU',
    PixelData: [pixelData],
    // PixelData's VR is ambiguous in the dictionary (OB or OW); 16-bit pixels are OW.
    _vrMap: { PixelData: 'OW' },
  };
  const file = new dcmjsData.DicomDict(meta);
  file.dict = dcmjsData.DicomMetaDictionary.denaturalizeDataset(dataset);
  return file.write();
}

/**
 * A decimal string (DS, DICOM PS3.5 6.2): at most 16 characters. Rounds to 6 decimals and drops
 * trailing zeros, which writes every value of this grid exactly.
 */
export function decimalString(value: number): string {
  const text = String(Number(value.toFixed(6)));
  if (text.length > 16) throw new RangeError(`${value} does not fit a decimal string`);
  return text;
}
