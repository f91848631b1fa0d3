/**
 * Reading measured spectra. Hand-written files follow the format specifications:
 * - JCAMP-DX: the IUPAC JCAMP-DX recommendations (McDonald & Wilks, Appl. Spectrosc. 42 (1988) 151,
 *   for the core labels and the ASDF compressed forms SQZ/DIF/DUP) and their mass-spectrometry form
 *   (Lampen et al., "JCAMP-DX for Mass Spectrometry", Appl. Spectrosc. 48 (1994) 1545): ##DATA TYPE=
 *   MASS SPECTRUM, ##XUNITS=M/Z, ##PEAK TABLE=(XY..XY), ##XYDATA=(X++(Y..Y)) with ##XFACTOR.
 * - mzML: the HUPO-PSI mzML 1.1 specification (binaryDataArray with cvParams of the PSI-MS
 *   vocabulary, base64 little-endian, zlib optional); the arrays' bytes are written out here from
 *   IEEE 754 by hand, or encoded with Node's own Buffer and zlib (independent of the parser's fflate).
 * Library-written files: Papa.unparse (papaparse), fromVariables (convert-to-jcamp) and
 * fast-xml-builder + fflate zlibSync for mzML.
 */
import { deflateSync } from 'node:zlib';
import { fromVariables } from 'convert-to-jcamp';
import XMLBuilder from 'fast-xml-builder';
import { zlibSync } from 'fflate';
import Papa from 'papaparse';
import { describe, expect, it } from 'vitest';
import { detectFormat, importMeasuredSpectrum, readMeasuredSpectrum } from '../../src/measured/importSpectrum';
import { MeasuredFileError } from '../../src/measured/measuredSpectrum';
import { pickMeasuredPeaks } from '../../src/measured/peakMatch';

const arr = (a: Float64Array): number[] => Array.from(a);
const close = (a: Float64Array, b: number[], rel = 1e-12): void => {
  expect(a.length).toBe(b.length);
  b.forEach((v, i) => expect(Math.abs(a[i] - v)).toBeLessThanOrEqual(rel * Math.max(Math.abs(v), 1e-300)));
};
const fails = (text: string, pattern: RegExp, options = {}): void => {
  const r = importMeasuredSpectrum(text, options);
  expect(r.ok).toBe(false);
  if (!r.ok) expect(r.error).toMatch(pattern);
};

describe('two-column text', () => {
  it('reads a comma-separated file with a header that states the unit', () => {
    const s = readMeasuredSpectrum('time_ns,intensity\n20000,1\n20000.5,4\n20001,2\n');
    expect(s.format).toBe('text');
    expect(s.axis).toBe('time');
    expect(s.timeUnitFrom).toBe('file');
    close(s.x, [20000e-9, 20000.5e-9, 20001e-9]);
    expect(arr(s.intensity)).toEqual([1, 4, 2]);
  });

  it('asks for the time unit when the file does not state it, and uses the one given', () => {
    const text = '20.0\t1\n20.5\t4\n21.0\t2\n';
    const r = importMeasuredSpectrum(text);
    expect(r.ok).toBe(false);
    if (!r.ok) {
      expect(r.needsTimeUnit).toBe(true);
      expect(r.error).toMatch(/does not state the unit/);
    }
    const s = readMeasuredSpectrum(text, { timeUnit: 'us' });
    expect(s.timeUnitFrom).toBe('user');
    close(s.x, [20e-6, 20.5e-6, 21e-6]);
  });

  it('reads semicolons with decimal commas, space runs, comments, a µs header and an m/z header', () => {
    close(readMeasuredSpectrum('# instrument export\nt (µs);counts\n20,5;1\n21,0;2,5\n21,5;3\n').x, [20.5e-6, 21e-6, 21.5e-6]);
    expect(arr(readMeasuredSpectrum('t (µs);counts\n20,5;1\n21,0;2,5\n21,5;3\n').intensity)).toEqual([1, 2.5, 3]);
    const mz = readMeasuredSpectrum('m/z   intensity\n1000.0   3\n1000.5    7\n1001.0 2\n');
    expect(mz.axis).toBe('mz');
    expect(arr(mz.x)).toEqual([1000, 1000.5, 1001]);
    const seconds = readMeasuredSpectrum('time [s]|y\n2e-5|1\n2.1e-5|2\n2.2e-5|3\n');
    close(seconds.x, [2e-5, 2.1e-5, 2.2e-5]);
  });

  it('puts a descending file in ascending order', () => {
    const s = readMeasuredSpectrum('time_ns,y\n3,30\n2,20\n1,10\n');
    expect(arr(s.intensity)).toEqual([10, 20, 30]);
  });

  it('refuses bad files with one message that says what is wrong', () => {
    fails('hello\nworld\n', /no line holds two numbers/);
    fails('time_ns,y\n1,2\n2,x\n3,4\n', /data line 2 .*not two numbers/);
    fails('time_ns,y\n1,2\n1,3\n2,4\n', /increase .*strictly/);
    fails('time_ns,y\n1,2\n2,3\n', /at least 3/);
    fails('time_ns,y\n1,2\n2,3\n3,4\n', /differs from the time unit given/, { timeUnit: 'us' });
  });

  it('reads a file written by papaparse (Papa.unparse)', () => {
    const rows = [['time_us', 'counts'], ...[0, 1, 2, 3].map((k) => [String(20 + 0.001 * k), String(k * k)])];
    const s = readMeasuredSpectrum(Papa.unparse(rows));
    close(s.x, [20e-6, 20.001e-6, 20.002e-6, 20.003e-6]);
    expect(arr(s.intensity)).toEqual([0, 1, 4, 9]);
  });
});

describe('JCAMP-DX (IUPAC recommendations, mass spectrometry form)', () => {
  it('reads a ##PEAK TABLE=(XY..XY) mass spectrum in M/Z', () => {
    const text = [
      '##TITLE= invented calibration mix, centroided',
      '##JCAMP-DX= 5.01',
      '##DATA TYPE= MASS SPECTRUM',
      '##DATA CLASS= PEAK TABLE',
      '##XUNITS= M/Z',
      '##YUNITS= RELATIVE ABUNDANCE',
      '##NPOINTS= 3',
      '##PEAK TABLE= (XY..XY)',
      '1046.54, 100; 1296.68, 62',
      '2093.09, 18',
      '##END=',
    ].join('\n');
    expect(detectFormat(text)).toBe('jcamp');
    const s = readMeasuredSpectrum(text);
    expect(s.axis).toBe('mz');
    expect(s.title).toBe('invented calibration mix, centroided');
    expect(arr(s.x)).toEqual([1046.54, 1296.68, 2093.09]);
    expect(arr(s.intensity)).toEqual([100, 62, 18]);
    // A peak table is a list of centroids: every entry is a peak.
    expect(s.centroided).toBe(true);
    expect(pickMeasuredPeaks(s).map((p) => p.position)).toEqual([1046.54, 1296.68, 2093.09]);
  });

  it('reads ##XYDATA=(X++(Y..Y)) in MICROSECONDS with XFACTOR and ASDF compressed lines', () => {
    // X values on the lines are in units of XFACTOR (1 ns): FIRSTX 20 µs = 20000 × 0.001 µs.
    // Line 1 is plain (AFFN); line 2 is SQZ (A..I = 1..9, @ = 0) then DIF (J..R = +1..+9, j..r = −1..−9).
    const text = [
      '##TITLE= invented transient',
      '##JCAMP-DX= 5.01',
      '##DATA TYPE= MASS SPECTRUM',
      '##DATA CLASS= XYDATA',
      '##XUNITS= MICROSECONDS',
      '##YUNITS= COUNTS',
      '##XFACTOR= 0.001',
      '##YFACTOR= 1',
      '##FIRSTX= 20',
      '##LASTX= 20.007',
      '##NPOINTS= 8',
      '##FIRSTY= 0',
      '##XYDATA= (X++(Y..Y))',
      '20000 0 2 5 9',
      '20004 E j l j',
      '##END=',
    ].join('\n');
    const s = readMeasuredSpectrum(text);
    expect(s.axis).toBe('time');
    expect(s.timeUnitFrom).toBe('file');
    close(s.x, [0, 1, 2, 3, 4, 5, 6, 7].map((k) => (20 + 0.001 * k) * 1e-6), 1e-9);
    // E = 5; then differences −1, −3, −1: 5, 4, 1, 0.
    expect(arr(s.intensity)).toEqual([0, 2, 5, 9, 5, 4, 1, 0]);
  });

  it('asks for the unit of a time axis the file leaves without one, and refuses a file without data', () => {
    const noUnit = '##TITLE= t\n##JCAMP-DX= 5.01\n##DATA TYPE= MASS SPECTRUM\n##NPOINTS= 3\n##PEAK TABLE= (XY..XY)\n1 2; 2 3; 3 4\n##END=';
    const r = importMeasuredSpectrum(noUnit);
    expect(r.ok === false && r.needsTimeUnit).toBe(true);
    close(readMeasuredSpectrum(noUnit, { timeUnit: 'ns' }).x, [1e-9, 2e-9, 3e-9]);
    fails('##TITLE= empty\n##JCAMP-DX= 5.01\n##END=', /no JCAMP-DX data block/);
  });

  it('reads a file written by convert-to-jcamp (fromVariables)', () => {
    const text = fromVariables(
      {
        x: { data: [20.001, 20.002, 20.003, 20.004], label: 'time', units: 'MICROSECONDS', isDependent: false },
        y: { data: [0, 12, 40, 7], label: 'counts', units: 'COUNTS', isDependent: true },
      } as never,
      { info: { title: 'written by convert-to-jcamp', dataType: 'MASS SPECTRUM' } } as never,
    );
    const s = readMeasuredSpectrum(text);
    close(s.x, [20.001e-6, 20.002e-6, 20.003e-6, 20.004e-6], 1e-12);
    expect(arr(s.intensity)).toEqual([0, 12, 40, 7]);
  });
});

/** A minimal mzML 1.1 document around the given spectra (hand-written from the specification). */
function mzml(spectra: string[]): string {
  return `<?xml version="1.0" encoding="utf-8"?>
<mzML xmlns="http://psi.hupo.org/ms/mzml" version="1.1.0">
  <cvList count="2">
    <cv id="MS" fullName="Proteomics Standards Initiative Mass Spectrometry Ontology" URI="https://raw.githubusercontent.com/HUPO-PSI/psi-ms-CV/master/psi-ms.obo"/>
    <cv id="UO" fullName="Unit Ontology" URI="http://ontologies.berkeleybop.org/uo.obo"/>
  </cvList>
  <referenceableParamGroupList count="1">
    <referenceableParamGroup id="float64zlib">
      <cvParam cvRef="MS" accession="MS:1000523" name="64-bit float"/>
      <cvParam cvRef="MS" accession="MS:1000574" name="zlib compression"/>
    </referenceableParamGroup>
  </referenceableParamGroupList>
  <run id="invented_run">
    <spectrumList count="${spectra.length}" defaultDataProcessingRef="dp">
${spectra.join('\n')}
    </spectrumList>
  </run>
</mzML>`;
}

function array(b64: string, terms: string[], length?: number): string {
  return `<binaryDataArray encodedLength="${b64.length}"${length === undefined ? '' : ` arrayLength="${length}"`}>
${terms.map((t) => (t.startsWith('<') ? t : `<cvParam cvRef="MS" accession="${t.split('|')[0]}" name="${t.split('|')[1]}"${t.split('|')[2] ? ` unitCvRef="UO" unitAccession="${t.split('|')[2]}" unitName="unit"` : ''}/>`)).join('\n')}
<binary>${b64}</binary>
</binaryDataArray>`;
}

function spectrum(id: string, n: number, arrays: string[]): string {
  return `<spectrum index="0" id="${id}" defaultArrayLength="${n}">
<cvParam cvRef="MS" accession="MS:1000579" name="MS1 spectrum"/>
<binaryDataArrayList count="${arrays.length}">
${arrays.join('\n')}
</binaryDataArrayList>
</spectrum>`;
}

const zb64 = (a: Float64Array): string => deflateSync(Buffer.from(a.buffer)).toString('base64');

describe('mzML (HUPO-PSI mzML 1.1)', () => {
  // 32-bit floats 20, 20.5, 21: 0x41A00000, 0x41A40000, 0x41A80000, little-endian → bytes
  // 00 00 A0 41 00 00 A4 41 00 00 A8 41 → base64 "AACgQQAApEEAAKhB".
  // 64-bit floats 0, 5, 1: 0, 0x4014000000000000, 0x3FF0000000000000 → "AAAAAAAAAAAAAAAAAAAUQAAAAAAAAPA/".
  const timeArray = array('AACgQQAApEEAAKhB', ['MS:1000521|32-bit float', 'MS:1000576|no compression', 'MS:1000595|time array|UO:0000029']);
  const intensity = array('AAAAAAAAAAAAAAAAAAAUQAAAAAAAAPA/', ['MS:1000523|64-bit float', 'MS:1000576|no compression', 'MS:1000515|intensity array']);

  it('reads a time array (32-bit, µs) and an intensity array (64-bit), uncompressed', () => {
    const text = mzml([spectrum('scan=1', 3, [timeArray, intensity])]);
    expect(detectFormat(text)).toBe('mzml');
    const s = readMeasuredSpectrum(text);
    expect(s.axis).toBe('time');
    expect(s.timeUnitFrom).toBe('file');
    expect(s.title).toBe('scan=1');
    close(s.x, [20e-6, 20.5e-6, 21e-6]);
    expect(arr(s.intensity)).toEqual([0, 5, 1]);
  });

  it('reads zlib-compressed 64-bit arrays (compressed by Node zlib), terms from a referenceableParamGroup, and picks a spectrum by index', () => {
    const mz = new Float64Array([1000.25, 1000.5, 1000.75, 1001]);
    const y = new Float64Array([3, 10, 4.5, 1]);
    const second = spectrum('scan=2', 4, [
      array(zb64(mz), ['<referenceableParamGroupRef ref="float64zlib"/>', 'MS:1000514|m/z array']),
      array(zb64(y), ['MS:1000523|64-bit float', 'MS:1000574|zlib compression', 'MS:1000515|intensity array']),
    ]);
    const text = mzml([spectrum('scan=1', 3, [timeArray, intensity]), second]);
    const s = readMeasuredSpectrum(text, { spectrumIndex: 1 });
    expect(s.axis).toBe('mz');
    expect(arr(s.x)).toEqual(Array.from(mz));
    expect(arr(s.intensity)).toEqual(Array.from(y));
  });

  it('asks for the time unit when the time array has none', () => {
    const bare = array('AACgQQAApEEAAKhB', ['MS:1000521|32-bit float', 'MS:1000595|time array']);
    const text = mzml([spectrum('s', 3, [bare, intensity])]);
    expect(importMeasuredSpectrum(text)).toMatchObject({ ok: false, needsTimeUnit: true });
    close(readMeasuredSpectrum(text, { timeUnit: 'us' }).x, [20e-6, 20.5e-6, 21e-6]);
  });

  it('refuses bad files with one message naming the array at fault', () => {
    fails('<root/>', /no <mzML> element/);
    fails(mzml([spectrum('s', 3, [timeArray])]), /no intensity array/);
    fails(mzml([spectrum('s', 4, [timeArray, intensity])]), /holds 3 values, the spectrum says 4/);
    fails(mzml([spectrum('s', 3, [timeArray, array('AAAAAAAAAAAAAAAAAAAUQAAAAAAAAPA/', ['MS:1000523|64-bit float', 'MS:1000574|zlib compression', 'MS:1000515|intensity array'])])]), /cannot be inflated/);
    fails(mzml([spectrum('s', 3, [timeArray, array('not*base64', ['MS:1000523|64-bit float', 'MS:1000515|intensity array'])])]), /not base64/);
    fails(mzml([spectrum('s', 3, [timeArray, array('AAAA', ['MS:1002312|MS-Numpress linear prediction compression', 'MS:1000523|64-bit float', 'MS:1000515|intensity array'])])]), /Numpress.*not supported/);
    fails(mzml([spectrum('s', 3, [array('AACgQQAApEEAAKhB', ['MS:1000521|32-bit float', 'MS:1000595|time array|UO:0000008']), intensity])]), /unit UO:0000008 is not a time unit/);
    fails(mzml([spectrum('s', 3, [timeArray, intensity])]), /spectrum index 2 does not exist/, { spectrumIndex: 2 });
  });

  it('reads a file written by fast-xml-builder with arrays compressed by fflate', () => {
    const time = new Float64Array([19.9995, 20, 20.0005, 20.001].map((t) => t * 1e-6));
    const y = new Float32Array([1, 8, 3, 0]);
    const param = (accession: string, name: string, unit?: string) => ({ '@_cvRef': 'MS', '@_accession': accession, '@_name': name, ...(unit ? { '@_unitCvRef': 'UO', '@_unitAccession': unit } : {}) });
    const encoded = (bytes: Uint8Array, params: object[]) => {
      const text = Buffer.from(zlibSync(bytes)).toString('base64');
      return { '@_encodedLength': text.length, cvParam: params, binary: text };
    };
    const doc = {
      '?xml': { '@_version': '1.0', '@_encoding': 'utf-8' },
      mzML: {
        '@_xmlns': 'http://psi.hupo.org/ms/mzml',
        '@_version': '1.1.0',
        run: {
          '@_id': 'library_written',
          spectrumList: {
            '@_count': 1,
            spectrum: {
              '@_index': 0,
              '@_id': 'scan=7',
              '@_defaultArrayLength': 4,
              binaryDataArrayList: {
                '@_count': 2,
                binaryDataArray: [
                  encoded(new Uint8Array(time.buffer), [param('MS:1000523', '64-bit float'), param('MS:1000574', 'zlib compression'), param('MS:1000595', 'time array', 'UO:0000010')]),
                  encoded(new Uint8Array(y.buffer), [param('MS:1000521', '32-bit float'), param('MS:1000574', 'zlib compression'), param('MS:1000515', 'intensity array')]),
                ],
              },
            },
          },
        },
      },
    };
    const text = new XMLBuilder({ ignoreAttributes: false, attributeNamePrefix: '@_', format: true, suppressEmptyNode: true }).build(doc);
    const s = readMeasuredSpectrum(text);
    expect(s.title).toBe('scan=7');
    expect(arr(s.x)).toEqual(Array.from(time));
    expect(arr(s.intensity)).toEqual([1, 8, 3, 0]);
  });
});

describe('errors', () => {
  it('are MeasuredFileError with needsTimeUnit only when a unit is missing', () => {
    expect(() => readMeasuredSpectrum('a\nb')).toThrow(MeasuredFileError);
  });
});
