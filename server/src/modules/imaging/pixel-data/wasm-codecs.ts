/**
 * The two WebAssembly decoders: the CharLS WebAssembly build (JPEG-LS) and the OpenJPEG
 * WebAssembly build (JPEG 2000). Both are Emscripten modules whose factories are async, while
 * decoding runs synchronously inside the reading worker. So `initialiseCodecs` compiles each
 * module once (async, at worker start-up), and instances are then made synchronously from the
 * compiled module: lazily on first use, again after any failure (a trap or a C++ exception
 * may leave the module's heap and stack in an unknown state), and when `releaseCodecMemory`
 * finds that one has grown its memory.
 */
import { readFile } from 'node:fs/promises';
import { createRequire } from 'node:module';

/** The decoder of the CharLS WebAssembly build (its JpegLSDecoder class). */
export interface JpegLsDecoderInstance {
  getEncodedBuffer(length: number): Uint8Array;
  getDecodedBuffer(): Uint8Array;
  decode(): void;
  getFrameInfo(): { width: number; height: number; bitsPerSample: number; componentCount: number };
  getNearLossless(): number;
  delete(): void;
}

/** The decoder of the OpenJPEG WebAssembly build (its J2KDecoder class). */
export interface J2kDecoderInstance {
  getEncodedBuffer(length: number): Uint8Array;
  getDecodedBuffer(): Uint8Array;
  readHeader(): void;
  decode(): void;
  getFrameInfo(): {
    width: number;
    height: number;
    bitsPerSample: number;
    componentCount: number;
    isSigned: boolean;
  };
  getIsReversible(): boolean;
  delete(): void;
}

interface EmscriptenModule {
  HEAPU8: Uint8Array;
  HEAPU32: Uint32Array;
}

export interface CharlsModule extends EmscriptenModule {
  JpegLSDecoder: new () => JpegLsDecoderInstance;
}

export interface OpenJpegModule extends EmscriptenModule {
  J2KDecoder: new () => J2kDecoderInstance;
}

type CodecName = 'charls' | 'openjpeg';

/**
 * The WebAssembly API, typed here: the server's TypeScript library (ES2022, Node types 20)
 * does not declare it, and a global declaration would clash where the DOM library does.
 */
interface CompiledModule {
  readonly compiledModule: unique symbol;
}
interface WasmInstance {
  exports: object;
}
interface WebAssemblyApi {
  compile(bytes: Uint8Array): Promise<CompiledModule>;
  Instance: new (module: CompiledModule, imports: object) => WasmInstance;
}
const webAssembly = (globalThis as unknown as { WebAssembly: WebAssemblyApi }).WebAssembly;

interface ModuleArgument {
  instantiateWasm(
    imports: object,
    receive: (instance: WasmInstance, module: CompiledModule) => void,
  ): object;
  print(text: string): void;
  printErr(text: string): void;
}

type Factory = (moduleArgument: ModuleArgument) => Promise<unknown>;

interface Codec {
  factory: Factory;
  compiled: CompiledModule;
  /** The live instance, or null until first use (and after a failure). */
  instance: EmscriptenModule | null;
  /** Bytes of memory a fresh instance starts with (the module's initial memory). */
  initialBytes: number;
  /** What the module printed since the last `takeMessages`: OpenJPEG reports errors so. */
  messages: string[];
}

const require = createRequire(import.meta.url);
// The npm packages of the two builds, and the files of their full (encode and decode) builds.
const sources: Record<CodecName, { glue: string; wasm: string }> = {
  charls: { glue: '@cornerstonejs/codec-charls/wasmjs', wasm: '@cornerstonejs/codec-charls/wasm' },
  openjpeg: {
    glue: '@cornerstonejs/codec-openjpeg/wasmjs',
    wasm: '@cornerstonejs/codec-openjpeg/wasm',
  },
};

const codecs = new Map<CodecName, Codec>();
let initialising: Promise<void> | null = null;

/** Compiles both WebAssembly modules; the worker awaits this once before decoding anything. */
export function initialiseCodecs(): Promise<void> {
  initialising ??= (async () => {
    for (const name of Object.keys(sources) as CodecName[]) {
      const factory = require(sources[name].glue) as Factory;
      const compiled = await webAssembly.compile(
        await readFile(require.resolve(sources[name].wasm)),
      );
      codecs.set(name, { factory, compiled, instance: null, initialBytes: 0, messages: [] });
    }
  })();
  initialising.catch(() => {
    initialising = null;
  });
  return initialising;
}

function codecOf(name: CodecName): Codec {
  const codec = codecs.get(name);
  if (!codec) {
    throw new Error('The pixel-data codecs are not initialised: await initialiseCodecs() first.');
  }
  return codec;
}

/** A fresh instance, made synchronously from the compiled module. */
function instantiate(codec: Codec): EmscriptenModule {
  const moduleArgument: ModuleArgument & Partial<EmscriptenModule> & { calledRun?: boolean } = {
    instantiateWasm(imports, receive) {
      const instance = new webAssembly.Instance(codec.compiled, imports);
      receive(instance, codec.compiled);
      return instance.exports;
    },
    print: (text) => record(codec, text),
    printErr: (text) => record(codec, text),
  };
  // The factory fills its argument in as it runs; with a synchronous instantiateWasm it is
  // ready when the call returns. Its promise settles too, unobserved: handled here.
  codec.factory(moduleArgument).catch(() => undefined);
  if (!moduleArgument.calledRun || !moduleArgument.HEAPU8) {
    throw new Error('A WebAssembly codec did not start synchronously.');
  }
  const instance = moduleArgument as EmscriptenModule;
  codec.initialBytes ||= instance.HEAPU8.buffer.byteLength;
  return instance;
}

function record(codec: Codec, text: string): void {
  // Bounded: a damaged codestream can make a decoder print a line per code-block.
  if (codec.messages.length < 200) codec.messages.push(text);
}

export function charls(): CharlsModule {
  const codec = codecOf('charls');
  codec.instance ??= instantiate(codec);
  return codec.instance as CharlsModule;
}

export function openJpeg(): OpenJpegModule {
  const codec = codecOf('openjpeg');
  codec.instance ??= instantiate(codec);
  return codec.instance as OpenJpegModule;
}

/** What the codec printed since the last call (and forgets it). */
export function takeMessages(name: CodecName): string[] {
  const codec = codecOf(name);
  const messages = codec.messages;
  codec.messages = [];
  return messages;
}

/** Drops the instance after a failure: the next use makes a fresh one. */
export function discardInstance(name: CodecName): void {
  codecOf(name).instance = null;
}

/**
 * The message of a C++ exception a codec threw: Emscripten throws the exception object's
 * address, and a std::exception derived from std::runtime_error (libc++) keeps a pointer to
 * its what() string right after its vtable pointer. Anything implausible reads as null.
 */
export function cppExceptionMessage(module: EmscriptenModule, thrown: unknown): string | null {
  if (typeof thrown !== 'number' || !Number.isInteger(thrown) || thrown <= 0) return null;
  const heap = module.HEAPU8;
  if (thrown % 4 !== 0 || thrown + 8 > heap.length) return null;
  const textAddress = module.HEAPU32[thrown / 4 + 1];
  if (!textAddress || textAddress >= heap.length) return null;
  let text = '';
  for (let at = textAddress; at < heap.length && heap[at] !== 0 && text.length < 200; at++) {
    const byte = heap[at];
    if (byte < 0x20 || byte > 0x7e) return null;
    text += String.fromCharCode(byte);
  }
  return text.length > 0 ? text : null;
}

/** Bytes of WebAssembly memory each codec holds now (0 when it has no instance). */
export function wasmMemoryBytes(): Record<string, number> {
  const bytes: Record<string, number> = {};
  for (const name of Object.keys(sources) as CodecName[]) {
    bytes[name] = codecs.get(name)?.instance?.HEAPU8.buffer.byteLength ?? 0;
  }
  return bytes;
}

/**
 * WebAssembly memory only grows: a decoder that once needed a large heap keeps it. Drops any
 * instance whose memory grew beyond its initial size and beyond `maxBytes`, so the worker's
 * memory stays bounded between files; the next decode makes a fresh one.
 */
export function releaseCodecMemory(maxBytes: number): void {
  for (const codec of codecs.values()) {
    const bytes = codec.instance?.HEAPU8.buffer.byteLength ?? 0;
    if (bytes > maxBytes && bytes > codec.initialBytes) codec.instance = null;
  }
}

/** Throws unless `initialiseCodecs` has finished. */
export function assertInitialised(): void {
  if (codecs.size < Object.keys(sources).length) {
    throw new Error('The pixel-data codecs are not initialised: await initialiseCodecs() first.');
  }
}
