// dcmjs 0.51.1 ships no types: the parts Emberline uses (the data dictionary on the server; the
// writer in the tests, which build DICOM files of their own).
declare module 'dcmjs' {
  interface DictionaryEntry {
    tag: string;
    /** "PN", or a choice such as "US or SS", "xs" (US/SS) or "ox" (OB/OW). */
    vr: string;
    vm: string;
    name: string;
  }

  /** A data set in the DICOM JSON model (PS3.18 F.2), keyed by "GGGGEEEE". */
  type DenaturalizedDataset = Record<
    string,
    { vr: string; Value?: unknown[]; InlineBinary?: string }
  >;

  class DicomDict {
    constructor(meta: DenaturalizedDataset);
    meta: DenaturalizedDataset;
    dict: DenaturalizedDataset;
    /** A Part 10 file: 128-byte zero preamble, DICM, the meta and the data set. */
    write(options?: { allowInvalidVRLength?: boolean }): ArrayBuffer;
  }

  const dcmjs: {
    data: {
      DicomDict: typeof DicomDict;
      DicomMetaDictionary: {
        /** Keyed "(GGGG,EEEE)"; undefined for a tag it does not know. */
        dictionary: Record<string, DictionaryEntry | undefined>;
        denaturalizeDataset(dataset: Record<string, unknown>): DenaturalizedDataset;
        naturalizeDataset(dataset: DenaturalizedDataset): Record<string, unknown>;
      };
      DicomMessage: {
        readFile(buffer: ArrayBuffer, options?: Record<string, unknown>): DicomDict;
      };
      /** 1-bit pixel packing (tests writing DICOM SEG): one bit a non-zero value, LSB first. */
      BitArray: { pack(pixels: ArrayLike<number>): Uint8Array };
    };
    log: { setLevel(level: 'trace' | 'debug' | 'info' | 'warn' | 'error' | 'silent'): void };
  };
  export default dcmjs;
}
