/**
 * mzML (HUPO-PSI mzML 1.1 specification), read with fast-xml-parser; zlib-compressed arrays are
 * inflated with fflate. One spectrum is read (the first, or the one asked for). Its binary data
 * arrays are named by controlled-vocabulary terms of the PSI-MS vocabulary (accessions written
 * from memory and checked against the specification's examples):
 *   MS:1000514 m/z array, MS:1000515 intensity array, MS:1000595 time array;
 *   MS:1000521 32-bit float, MS:1000523 64-bit float, MS:1000519 32-bit integer, MS:1000522 64-bit integer;
 *   MS:1000574 zlib compression, MS:1000576 no compression; MS-Numpress (MS:1002312–MS:1002314) is refused.
 * Arrays are base64 little-endian (the specification fixes the byte order). A time array's unit is
 * its cvParam's unitAccession (UO:0000010 second, UO:0000028 millisecond, UO:0000029 microsecond,
 * UO:0000150 nanosecond, UO:0000031 minute; from memory). Terms may also come from a
 * referenceableParamGroup, as the specification allows.
 */
import { XMLParser } from 'fast-xml-parser';
import { unzlibSync } from 'fflate';
import { MeasuredFileError, SECONDS_PER_UNIT, toMeasuredSpectrum, type MeasuredSpectrum, type TimeUnit } from './measuredSpectrum';

export const MS = {
  mzArray: 'MS:1000514',
  intensityArray: 'MS:1000515',
  timeArray: 'MS:1000595',
  float32: 'MS:1000521',
  float64: 'MS:1000523',
  int32: 'MS:1000519',
  int64: 'MS:1000522',
  zlib: 'MS:1000574',
  noCompression: 'MS:1000576',
} as const;

const NUMPRESS = new Set(['MS:1002312', 'MS:1002313', 'MS:1002314', 'MS:1002746', 'MS:1002747', 'MS:1002748']);

const UO_SECONDS: Readonly<Record<string, number>> = {
  'UO:0000010': SECONDS_PER_UNIT.s,
  'UO:0000028': SECONDS_PER_UNIT.ms,
  'UO:0000029': SECONDS_PER_UNIT.us,
  'UO:0000150': SECONDS_PER_UNIT.ns,
  'UO:0000031': SECONDS_PER_UNIT.min,
};

type Node = Record<string, unknown>;
interface CvParam {
  readonly accession: string;
  readonly name: string;
  readonly unitAccession: string | null;
}

const LISTS = new Set(['spectrum', 'cvParam', 'userParam', 'binaryDataArray', 'referenceableParamGroup', 'referenceableParamGroupRef']);

export interface MzmlOptions {
  readonly timeUnit?: TimeUnit;
  /** Index (0-based) of the spectrum to read; the first by default. */
  readonly spectrumIndex?: number;
}

export function parseMzmlSpectrum(text: string, options: MzmlOptions = {}): MeasuredSpectrum {
  const parser = new XMLParser({
    ignoreAttributes: false,
    attributeNamePrefix: '',
    processEntities: false,
    parseTagValue: false,
    parseAttributeValue: false,
    removeNSPrefix: true,
    isArray: (name) => LISTS.has(name),
  });
  let doc: Node;
  try {
    doc = parser.parse(text) as Node;
  } catch (err) {
    throw new MeasuredFileError(`is not well-formed XML (${(err as Error).message})`);
  }
  const mzml = (child(doc, 'mzML') ?? child(child(doc, 'indexedmzML'), 'mzML')) as Node | undefined;
  if (!mzml) throw new MeasuredFileError('has no <mzML> element; is this an mzML file?');
  const groups = new Map<string, CvParam[]>();
  for (const g of list(child(mzml, 'referenceableParamGroupList'), 'referenceableParamGroup')) groups.set(String(g.id), cvParams(g, new Map()));
  const spectra = list(child(child(mzml, 'run'), 'spectrumList'), 'spectrum');
  if (spectra.length === 0) throw new MeasuredFileError('holds no <spectrum> in <run><spectrumList>');
  const index = options.spectrumIndex ?? 0;
  if (!Number.isInteger(index) || index < 0 || index >= spectra.length) {
    throw new MeasuredFileError(`has ${spectra.length} spectra; spectrum index ${index} does not exist (0..${spectra.length - 1})`);
  }
  const spectrum = spectra[index];
  const id = typeof spectrum.id === 'string' ? spectrum.id : null;
  const length = Number(spectrum.defaultArrayLength);
  if (!Number.isInteger(length) || length < 0) throw new MeasuredFileError(`spectrum ${id ?? index}: defaultArrayLength "${String(spectrum.defaultArrayLength)}" is not a whole number`);

  let xs: Float64Array | null = null;
  let xParam: CvParam | null = null;
  let ys: Float64Array | null = null;
  for (const [k, array] of list(child(spectrum, 'binaryDataArrayList'), 'binaryDataArray').entries()) {
    const params = cvParams(array, groups);
    const has = (acc: string): CvParam | undefined => params.find((p) => p.accession === acc);
    const kind = has(MS.timeArray) ? 'time' : has(MS.mzArray) ? 'mz' : has(MS.intensityArray) ? 'intensity' : null;
    if (kind === null) continue; // other arrays (charge, noise, ...) are not needed
    const where = `spectrum ${id ?? index}, binary data array ${k + 1} (${kind})`;
    const values = decodeArray(array, params, Number(array.arrayLength ?? length), where);
    if (kind === 'intensity') ys = values;
    else if (xs === null || kind === 'time') {
      xs = values;
      xParam = has(kind === 'time' ? MS.timeArray : MS.mzArray)!;
    }
  }
  if (xs === null || xParam === null) throw new MeasuredFileError(`spectrum ${id ?? index} has no m/z array (${MS.mzArray}) or time array (${MS.timeArray})`);
  if (ys === null) throw new MeasuredFileError(`spectrum ${id ?? index} has no intensity array (${MS.intensityArray})`);
  const isTime = xParam.accession === MS.timeArray;
  let secondsPerUnit: number | null = null;
  if (isTime && xParam.unitAccession !== null) {
    secondsPerUnit = UO_SECONDS[xParam.unitAccession] ?? null;
    if (secondsPerUnit === null) throw new MeasuredFileError(`spectrum ${id ?? index}: the time array's unit ${xParam.unitAccession} is not a time unit this program knows (${Object.keys(UO_SECONDS).join(', ')})`);
  }
  const notes = [`spectrum ${index + 1} of ${spectra.length}${id ? ` (id "${id}")` : ''}, ${xs.length} points, ${isTime ? 'time' : 'm/z'} array`];
  return toMeasuredSpectrum('mzml', xs, ys, { axis: isTime ? 'time' : 'mz', secondsPerUnit }, options.timeUnit, id, notes);
}

function decodeArray(array: Node, params: readonly CvParam[], expected: number, where: string): Float64Array {
  const has = (acc: string): boolean => params.some((p) => p.accession === acc);
  const numpress = params.find((p) => NUMPRESS.has(p.accession));
  if (numpress) throw new MeasuredFileError(`${where}: ${numpress.name || numpress.accession} compression is not supported (only zlib or none)`);
  const types = [MS.float32, MS.float64, MS.int32, MS.int64].filter(has);
  if (types.length !== 1) throw new MeasuredFileError(`${where}: needs exactly one binary data type term (32/64-bit float or integer), found ${types.length}`);
  const zlib = has(MS.zlib);
  const text = child(array, 'binary');
  const b64 = typeof text === 'string' ? text.replace(/\s+/g, '') : '';
  let bytes: Uint8Array;
  try {
    bytes = base64ToBytes(b64);
  } catch {
    throw new MeasuredFileError(`${where}: the <binary> content is not base64`);
  }
  if (zlib) {
    try {
      bytes = unzlibSync(bytes);
    } catch (err) {
      throw new MeasuredFileError(`${where}: the zlib-compressed data cannot be inflated (${(err as Error).message})`);
    }
  }
  const size = types[0] === MS.float64 || types[0] === MS.int64 ? 8 : 4;
  if (bytes.length % size !== 0) throw new MeasuredFileError(`${where}: ${bytes.length} bytes is not a whole number of ${size * 8}-bit values`);
  const count = bytes.length / size;
  if (Number.isFinite(expected) && count !== expected) throw new MeasuredFileError(`${where}: holds ${count} values, the spectrum says ${expected}`);
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const out = new Float64Array(count);
  for (let i = 0; i < count; i++) {
    const at = i * size;
    out[i] =
      types[0] === MS.float64 ? view.getFloat64(at, true)
      : types[0] === MS.float32 ? view.getFloat32(at, true)
      : types[0] === MS.int32 ? view.getInt32(at, true)
      : Number(view.getBigInt64(at, true));
  }
  return out;
}

// atob is a global of browsers and of Node ≥ 16 but not of the ES library the engine compiles against.
declare function atob(data: string): string;

/** Base64 to bytes with atob (in browsers and in Node ≥ 16), which refuses characters outside the alphabet. */
export function base64ToBytes(b64: string): Uint8Array {
  const binary = atob(b64);
  const out = new Uint8Array(binary.length);
  for (let i = 0; i < binary.length; i++) out[i] = binary.charCodeAt(i);
  return out;
}

function cvParams(node: Node, groups: ReadonlyMap<string, CvParam[]>): CvParam[] {
  const own = list(node, 'cvParam').map((p) => ({
    accession: String(p.accession ?? ''),
    name: String(p.name ?? ''),
    unitAccession: typeof p.unitAccession === 'string' ? p.unitAccession : null,
  }));
  for (const ref of list(node, 'referenceableParamGroupRef')) own.push(...(groups.get(String(ref.ref)) ?? []));
  return own;
}

function child(node: unknown, key: string): unknown {
  return typeof node === 'object' && node !== null && Object.hasOwn(node, key) ? (node as Node)[key] : undefined;
}

function list(node: unknown, key: string): Node[] {
  const value = child(node, key);
  return Array.isArray(value) ? value.filter((v): v is Node => typeof v === 'object' && v !== null) : [];
}
