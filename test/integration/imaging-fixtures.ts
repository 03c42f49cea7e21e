/**
 * Synthetic DICOM series for the imaging tests, written with dcmjs in the test itself: small
 * CT or MR stacks whose geometry, pixels and headers each test chooses, and a version that
 * carries an identifying value in every attribute the confidentiality profile names, in
 * private attributes, in nested sequences, in the file meta and in the preamble. Every value
 * here is invented.
 */
import dcmjs from 'dcmjs';
import type { Vec3 } from '@emberline/shared';
import { confidentialityProfileRules } from '../../server/src/modules/imaging/confidentiality-profile';
import type { ApiClient } from '../support/test-app';

dcmjs.log.setLevel('error');

type JsonElement = { vr: string; Value?: unknown[] };
export type JsonDataset = Record<string, JsonElement>;

export const ctImageStorage = '1.2.840.10008.5.1.4.1.1.2';
export const mrImageStorage = '1.2.840.10008.5.1.4.1.1.4';
export const explicitLittleEndian = '1.2.840.10008.1.2.1';
export const implicitLittleEndian = '1.2.840.10008.1.2';

/** Root of every original UID the fixtures make (invented; never to survive ingest). */
export const originalUidRoot = '1.2.826.0.1.3680043.10.99999';

let uidCounter = 0;
export function originalUid(): string {
  uidCounter += 1;
  return `${originalUidRoot}.${uidCounter}`;
}

export interface SeriesSpec {
  columns: number;
  rows: number;
  slices: number;
  /** Pixel Spacing as DICOM writes it: [row spacing Δj, column spacing Δi], millimetres. */
  pixelSpacing: [number, number];
  sliceSpacingMm: number;
  /** Image Position (Patient) of slice 0, LPS mm. */
  firstPosition: Vec3;
  /** Image Orientation (Patient): row direction X, column direction Y. */
  orientation: [Vec3, Vec3];
  studyUid: string;
  seriesUid: string;
  frameOfReferenceUid: string;
  modality?: string;
  transferSyntaxUid?: string;
  rescale?: { slope: number; intercept: number };
  /** 1: two's complement pixels. */
  pixelRepresentation?: 0 | 1;
  bitsStored?: number;
  /** The stored pixel value at column i, row j of slice s. */
  storedValue?: (i: number, j: number, s: number) => number;
  /** Identifying values everywhere (see `identifyingAttributes`). */
  isIdentifying?: boolean;
  /** Last word on slice s: change or add attributes. */
  adjust?: (s: number, dataset: JsonDataset) => void;
}

export const defaultStoredValue = (i: number, j: number, s: number) => 1000 + i + 3 * j + 100 * s;

/** The defaults of the small test series: 32 × 32 × 6, axial. */
export function seriesSpec(overrides: Partial<SeriesSpec> = {}): SeriesSpec {
  return {
    columns: 32,
    rows: 32,
    slices: 6,
    pixelSpacing: [0.7, 0.8],
    sliceSpacingMm: 2.5,
    firstPosition: [-175, -200, 50],
    orientation: [
      [1, 0, 0],
      [0, 1, 0],
    ],
    studyUid: originalUid(),
    seriesUid: originalUid(),
    frameOfReferenceUid: originalUid(),
    ...overrides,
  };
}

export function cross(a: Vec3, b: Vec3): Vec3 {
  return [a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0]];
}

/** Image Position (Patient) of slice s: the first position moved s spacings along X × Y. */
export function slicePosition(spec: SeriesSpec, s: number): Vec3 {
  const normal = cross(spec.orientation[0], spec.orientation[1]);
  return spec.firstPosition.map(
    (value, axis) => value + normal[axis] * spec.sliceSpacingMm * s,
  ) as Vec3;
}

const ds = (value: number) => String(Number(value.toFixed(6)));

function pixelData(spec: SeriesSpec, s: number): ArrayBuffer {
  const storedValue = spec.storedValue ?? defaultStoredValue;
  const values = new Uint16Array(spec.columns * spec.rows);
  for (let j = 0; j < spec.rows; j++) {
    for (let i = 0; i < spec.columns; i++) {
      values[i + spec.columns * j] = storedValue(i, j, s) & 0xffff;
    }
  }
  return values.buffer;
}

/** The data set of slice s, as dcmjs writes it (DICOM JSON model). */
export function sliceDataset(spec: SeriesSpec, s: number, sopInstanceUid: string): JsonDataset {
  const bitsStored = spec.bitsStored ?? 16;
  const dataset: JsonDataset = {
    ...(spec.isIdentifying ? identifyingAttributes() : {}),
    '00080016': { vr: 'UI', Value: [spec.modality === 'MR' ? mrImageStorage : ctImageStorage] },
    '00080018': { vr: 'UI', Value: [sopInstanceUid] },
    '00080060': { vr: 'CS', Value: [spec.modality ?? 'CT'] },
    '0020000D': { vr: 'UI', Value: [spec.studyUid] },
    '0020000E': { vr: 'UI', Value: [spec.seriesUid] },
    '00200011': { vr: 'IS', Value: ['3'] },
    '00200013': { vr: 'IS', Value: [String(s + 1)] },
    '00200032': { vr: 'DS', Value: slicePosition(spec, s).map(ds) },
    '00200037': { vr: 'DS', Value: [...spec.orientation[0], ...spec.orientation[1]].map(ds) },
    '00200052': { vr: 'UI', Value: [spec.frameOfReferenceUid] },
    '00280002': { vr: 'US', Value: [1] },
    '00280004': { vr: 'CS', Value: ['MONOCHROME2'] },
    '00280010': { vr: 'US', Value: [spec.rows] },
    '00280011': { vr: 'US', Value: [spec.columns] },
    '00280030': { vr: 'DS', Value: spec.pixelSpacing.map(ds) },
    '00280100': { vr: 'US', Value: [16] },
    '00280101': { vr: 'US', Value: [bitsStored] },
    '00280102': { vr: 'US', Value: [bitsStored - 1] },
    '00280103': { vr: 'US', Value: [spec.pixelRepresentation ?? 0] },
    '7FE00010': { vr: 'OW', Value: [pixelData(spec, s)] },
  };
  if (spec.modality !== 'MR') {
    const rescale = spec.rescale ?? { slope: 1, intercept: -1024 };
    dataset['00281052'] = { vr: 'DS', Value: [ds(rescale.intercept)] };
    dataset['00281053'] = { vr: 'DS', Value: [ds(rescale.slope)] };
  }
  spec.adjust?.(s, dataset);
  return dataset;
}

/** Text put into the 128-byte preamble of identifying files: it must never be stored. */
export const preambleText = 'QXPREAMBLE Quill Marguerite';

/** A Part 10 file: preamble, DICM, file meta, data set (dcmjs DicomDict.write). */
export function part10(
  dataset: JsonDataset,
  options: { transferSyntaxUid?: string; isIdentifying?: boolean } = {},
): Uint8Array {
  const sopClass = (dataset['00080016']?.Value?.[0] as string | undefined) ?? ctImageStorage;
  const sopInstance = (dataset['00080018']?.Value?.[0] as string | undefined) ?? originalUid();
  const meta = dcmjs.data.DicomMetaDictionary.denaturalizeDataset({
    FileMetaInformationVersion: new Uint8Array([0, 1]).buffer,
    MediaStorageSOPClassUID: sopClass,
    MediaStorageSOPInstanceUID: sopInstance,
    TransferSyntaxUID: options.transferSyntaxUid ?? explicitLittleEndian,
    ImplementationClassUID: `${originalUidRoot}.1`,
    ImplementationVersionName: options.isIdentifying ? 'QXIMPLNAME' : 'FIXTURE',
    ...(options.isIdentifying ? { SourceApplicationEntityTitle: 'QXSOURCEAE' } : {}),
  });
  const dict = new dcmjs.data.DicomDict(meta);
  dict.dict = dataset;
  const bytes = new Uint8Array(dict.write());
  if (options.isIdentifying) {
    for (let index = 0; index < preambleText.length; index++) {
      bytes[index] = preambleText.charCodeAt(index);
    }
  }
  return bytes;
}

/** The files of a series, slice 0 first (ascending along the slice normal). */
export function buildSeries(spec: SeriesSpec): Uint8Array[] {
  return Array.from({ length: spec.slices }, (_, s) =>
    part10(sliceDataset(spec, s, originalUid()), {
      transferSyntaxUid: spec.transferSyntaxUid,
      isIdentifying: spec.isIdentifying,
    }),
  );
}

// --- Identifying values --------------------------------------------------------------------

function dictionaryVr(tag: string): string {
  const entry = dcmjs.data.DicomMetaDictionary.dictionary[`(${tag.slice(0, 4)},${tag.slice(4)})`];
  return entry ? entry.vr.split(' or ')[0] : 'UN';
}

interface IdentifyingValues {
  attributes: JsonDataset;
  /** Strings that must appear nowhere once the series is stored. */
  forbidden: string[];
  /** Times of day the Modified Dates option keeps (tag → value). */
  keptTimes: Map<string, string>;
  /** Dates the option shifts (tag → original value). */
  shiftedDates: Map<string, string>;
}

let cachedValues: IdentifyingValues | undefined;

/** Tags the series builder sets itself, with values of its own. */
const structuralTags = new Set([
  '00080018',
  '0020000D',
  '0020000E',
  '00200052',
  '00020003',
  '00081140',
  '00082112',
]);

/**
 * An identifying value for every attribute the profile table treats (D, Z, X, C or U), a token
 * `QX<tag>` in text, a distinct 2024 date or a distinct time elsewhere; plus attributes the
 * table does not name, private attributes and sequences with identifying items.
 */
export function identifyingValues(): IdentifyingValues {
  if (cachedValues) return cachedValues;
  const attributes: JsonDataset = {};
  const forbidden = ['Quill', 'Marguerite', 'QUILLCORP', originalUidRoot, 'QXPREAMBLE'];
  const keptTimes = new Map<string, string>();
  const shiftedDates = new Map<string, string>();
  let n = 0;
  for (const rule of confidentialityProfileRules) {
    if (rule.action === 'K' || structuralTags.has(rule.tag) || rule.tag >= 'FFFA') continue;
    n += 1;
    const token = `QX${rule.tag}`;
    const vr = dictionaryVr(rule.tag);
    const date = new Date(Date.UTC(2024, 1, 1) + n * 86_400_000).toISOString();
    const da = date.slice(0, 10).replace(/-/g, '');
    const tm = `10${String(n % 60).padStart(2, '0')}${String((7 * n) % 60).padStart(2, '0')}.${String(314159 + n)}`;
    let element: JsonElement | undefined;
    switch (vr) {
      case 'PN':
        element = { vr, Value: [{ Alphabetic: `Quill^${token}` }] };
        forbidden.push(token);
        break;
      case 'AE':
      case 'CS':
      case 'SH':
      case 'LO':
      case 'LT':
      case 'ST':
      case 'UT':
      case 'UC':
        element = { vr, Value: [token] };
        forbidden.push(token);
        break;
      case 'DA':
        element = { vr, Value: [da] };
        forbidden.push(da);
        if (rule.withModifiedDates === 'C') shiftedDates.set(rule.tag, da);
        break;
      case 'DT':
        element = { vr, Value: [`${da}101512.271828`] };
        forbidden.push(da);
        if (rule.withModifiedDates === 'C') shiftedDates.set(rule.tag, da);
        break;
      case 'TM':
        element = { vr, Value: [tm] };
        if (rule.withModifiedDates === 'K') keptTimes.set(rule.tag, tm);
        else forbidden.push(tm);
        break;
      case 'UI':
        element = { vr, Value: [`${originalUidRoot}.77.${n}`] };
        break;
      case 'AS':
        element = { vr, Value: ['072Y'] };
        forbidden.push('072Y');
        break;
      case 'DS': {
        const value = `${n}.73917`;
        element = { vr, Value: [value] };
        forbidden.push(value);
        break;
      }
      case 'SQ':
        element = {
          vr,
          Value: [
            {
              '00100010': { vr: 'PN', Value: [{ Alphabetic: `Quill^QS${rule.tag}` }] },
              '00081030': { vr: 'LO', Value: [`QS${rule.tag}`] },
            },
          ],
        };
        forbidden.push(`QS${rule.tag}`);
        break;
      default:
        element = undefined;
    }
    if (element) attributes[rule.tag] = element;
  }
  // Not named by the table (Patient Transport Arrangements): removed by Emberline's policy.
  attributes['00401004'] = { vr: 'LO', Value: ['QXUNLISTED Quill'] };
  forbidden.push('QXUNLISTED');
  // Private attributes, top level: a creator and two values, one a sequence.
  attributes['00090010'] = { vr: 'LO', Value: ['QUILLCORP'] };
  attributes['00091001'] = { vr: 'LO', Value: ['QXPRIVATE note on Marguerite Quill'] };
  attributes['00091002'] = {
    vr: 'SQ',
    Value: [{ '00100020': { vr: 'LO', Value: ['QXPRIVSEQ'] } }],
  };
  forbidden.push('QXPRIVATE', 'QXPRIVSEQ');
  // Kept sequences (UIDs inside replaced) with identifying and private values in their items.
  for (const tag of ['00081140', '00082112']) {
    attributes[tag] = {
      vr: 'SQ',
      Value: [
        {
          '00081150': { vr: 'UI', Value: [ctImageStorage] },
          '00081155': { vr: 'UI', Value: [`${originalUidRoot}.88.${tag}`] },
          '00100010': { vr: 'PN', Value: [{ Alphabetic: `Quill^QN${tag}` }] },
          '00190010': { vr: 'LO', Value: ['QUILLCORP'] },
          '00191001': { vr: 'LO', Value: [`QNPRIVATE${tag}`] },
        },
      ],
    };
    forbidden.push(`QN${tag}`, `QNPRIVATE${tag}`);
  }
  forbidden.push('QXSOURCEAE', 'QXIMPLNAME');
  cachedValues = { attributes, forbidden: [...new Set(forbidden)], keptTimes, shiftedDates };
  return cachedValues;
}

export function identifyingAttributes(): JsonDataset {
  return structuredClone(identifyingValues().attributes);
}

/** File names of an identifying upload: they too must never be stored or logged. */
export const identifyingFileName = (s: number) => `Quill_Marguerite_QXFILENAME_${s}.dcm`;

/** Sets environment variables for the app a test file starts; answers how to put them back. */
export function setEnvironment(values: Record<string, string>): () => void {
  const saved = Object.keys(values).map((name) => [name, process.env[name]] as const);
  Object.assign(process.env, values);
  return () => {
    for (const [name, value] of saved) {
      if (value === undefined) Reflect.deleteProperty(process.env, name);
      else process.env[name] = value;
    }
  };
}

// --- Uploading -----------------------------------------------------------------------------

async function csrfToken(client: ApiClient): Promise<string> {
  const access = { domain: '127.0.0.1', path: '/', secure: false, script: true };
  let cookie = client.agent.jar.getCookie('XSRF-TOKEN', access);
  if (!cookie) {
    await client.get('/api/health');
    cookie = client.agent.jar.getCookie('XSRF-TOKEN', access);
  }
  if (!cookie) throw new Error('the server set no XSRF-TOKEN cookie');
  return cookie.value;
}

/**
 * A POST /api/cases/:id/series not sent yet, CSRF header set; wrapped, since awaiting the
 * request itself would send it.
 */
export async function seriesUploadCall(client: ApiClient, caseId: string) {
  const token = await csrfToken(client);
  const call = client.agent
    .post(`/api/cases/${caseId}/series`)
    .set('Host', '127.0.0.1')
    .set('X-XSRF-TOKEN', token);
  return { call };
}

/** POST /api/cases/:id/series with the files in the field `files`, as a browser sends them. */
export async function uploadFiles(
  client: ApiClient,
  caseId: string,
  files: readonly Uint8Array[],
  fileName: (index: number) => string = (index) => `slice-${index}.dcm`,
  fieldName = 'files',
) {
  let { call } = await seriesUploadCall(client, caseId);
  files.forEach((file, index) => {
    call = call.attach(fieldName, Buffer.from(file), {
      filename: fileName(index),
      contentType: 'application/dicom',
    });
  });
  return call;
}

/** The cookies and CSRF header a raw HTTP request needs to pass as the client. */
export async function rawRequestHeaders(client: ApiClient): Promise<Record<string, string>> {
  const token = await csrfToken(client);
  // script: false, or the jar withholds the HttpOnly session cookie.
  const access = { domain: '127.0.0.1', path: '/', secure: false, script: false };
  const cookies = ['emberline.sid', 'XSRF-TOKEN']
    .map((name) => client.agent.jar.getCookie(name, access))
    .filter((cookie) => cookie !== undefined)
    .map((cookie) => `${cookie.name}=${cookie.value}`);
  return { Cookie: cookies.join('; '), 'X-XSRF-TOKEN': token, Host: '127.0.0.1' };
}

/** mulberry32, a small seeded PRNG (common practice); numbers in [0, 1). */
export function seededRandom(seed: number): () => number {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}
