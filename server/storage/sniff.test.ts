import { describe, expect, it } from 'vitest';
import { checkUpload, normaliseDeclaredType, sniffKind } from './sniff';
import { tinyPdf, tinyPng } from '../../tests/fixtures/test-files';

const jpeg = Buffer.from([0xff, 0xd8, 0xff, 0xe0, 0, 0x10, 0x4a, 0x46, 0x49, 0x46, 0]);
const webp = Buffer.concat([Buffer.from('RIFF'), Buffer.from([0x1a, 0, 0, 0]), Buffer.from('WEBPVP8 ')]);

describe('sniffKind', () => {
  it('recognises each accepted kind by its magic bytes', () => {
    expect(sniffKind(tinyPdf())).toBe('pdf');
    expect(sniffKind(tinyPng())).toBe('png');
    expect(sniffKind(jpeg)).toBe('jpeg');
    expect(sniffKind(webp)).toBe('webp');
    expect(sniffKind(Buffer.from('\ufefftag,lrv,urv\nFT-101,0,2500\n'))).toBe('text');
  });
  it('refuses text with a NUL or invalid UTF-8, a RIFF that is not WebP, and empty content', () => {
    expect(sniffKind(Buffer.from('a,b\0c'))).toBeUndefined();
    expect(sniffKind(Buffer.from([0x61, 0xc3, 0x28]))).toBeUndefined();
    expect(sniffKind(Buffer.concat([Buffer.from('RIFF'), Buffer.alloc(4), Buffer.from('WAVE')]))).toBeUndefined();
    expect(sniffKind(Buffer.alloc(0))).toBeUndefined();
  });
});

describe('checkUpload', () => {
  it('accepts content that matches the declared type, parameters and aliases included', () => {
    expect(checkUpload({ declaredType: 'application/pdf', bytes: tinyPdf() })).toEqual({ ok: true, type: 'application/pdf' });
    expect(checkUpload({ declaredType: 'IMAGE/PNG', bytes: tinyPng() })).toEqual({ ok: true, type: 'image/png' });
    expect(checkUpload({ declaredType: 'image/jpg', bytes: jpeg })).toEqual({ ok: true, type: 'image/jpeg' });
    expect(checkUpload({ declaredType: 'text/csv; charset=utf-8', bytes: Buffer.from('a,b\n1,2\n') })).toEqual({ ok: true, type: 'text/csv' });
    expect(checkUpload({ declaredType: 'application/vnd.ms-excel', bytes: Buffer.from('a,b\n') })).toEqual({ ok: true, type: 'text/csv' });
  });
  it('refuses a PNG declared as a PDF as a mismatch', () => {
    expect(checkUpload({ declaredType: 'application/pdf', bytes: tinyPng() })).toMatchObject({ ok: false, code: 'type_mismatch', message: expect.stringMatching(/PDF.*PNG/) });
  });
  it('refuses a binary file declared as CSV (an xlsx is a zip)', () => {
    const zip = Buffer.from([0x50, 0x4b, 0x03, 0x04, 0x14, 0, 0, 0, 0x08, 0, 0xff, 0xfe]);
    expect(checkUpload({ declaredType: 'text/csv', bytes: zip })).toMatchObject({ ok: false, code: 'unsupported_type' });
  });
  it('refuses types we do not store, unknown declarations and empty files', () => {
    expect(checkUpload({ declaredType: 'application/zip', bytes: Buffer.from('PK') })).toMatchObject({ ok: false, code: 'unsupported_type' });
    expect(checkUpload({ declaredType: undefined, bytes: tinyPdf() })).toMatchObject({ ok: false, code: 'unsupported_type' });
    expect(checkUpload({ declaredType: 'text/plain', bytes: Buffer.alloc(0) })).toMatchObject({ ok: false, code: 'unsupported_type', message: 'The file is empty' });
    expect(normaliseDeclaredType('application/octet-stream')).toBeUndefined();
  });
});
