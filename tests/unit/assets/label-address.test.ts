// Issue 18: the address a lock or tag label carries, and reading it back from a scan.
import { describe, expect, it } from 'vitest';
import { BinaryBitmap, DecodeHintType, HybridBinarizer, QRCodeReader, RGBLuminanceSource } from '@zxing/library';
import { labelAddress, readLabelText, scanPath } from '@shared/assets/label-address';
import { qrImage } from '../../fixtures/qr-image';

function decode(text: string): string {
  const { width, height, luma } = qrImage(text, 3);
  const bitmap = new BinaryBitmap(new HybridBinarizer(new RGBLuminanceSource(luma, width, height)));
  return new QRCodeReader().decode(bitmap, new Map([[DecodeHintType.PURE_BARCODE, false]])).getText();
}

describe('issue 18: label addresses', () => {
  it('when a label is made for a lock, then its address is the public address with /scan/lock/ and the number, "/" escaped and no trailing slash doubled', () => {
    expect(labelAddress('https://holdpoint.example.com', 'lock', 'L-001')).toBe('https://holdpoint.example.com/scan/lock/L-001');
    expect(labelAddress('https://holdpoint.example.com/', 'tag', 'T/7')).toBe('https://holdpoint.example.com/scan/tag/T%2F7');
    expect(scanPath('lock', 'L.2_A')).toBe('/scan/lock/L.2_A');
  });

  it('when a scanned or typed text is read, then a label address gives its kind and number, a bare number its number, and anything else nothing', () => {
    expect(readLabelText('https://holdpoint.example.com/scan/lock/L-001')).toEqual({ kind: 'lock', number: 'L-001' });
    expect(readLabelText('http://10.0.0.5:3000/scan/tag/t%2F7?from=label')).toEqual({ kind: 'tag', number: 'T/7' });
    expect(readLabelText('  l-014 ')).toEqual({ kind: null, number: 'L-014' });
    expect(readLabelText('')).toBeNull();
    expect(readLabelText('two words')).toBeNull();
    expect(readLabelText('https://example.com/scan/lock/%E0%A4%A')).toBeNull();
    expect(readLabelText('https://example.com/other/page')).toBeNull();
  });

  it("issue 18: when a label's QR code is drawn with qrcode's matrix, then the scanning library's decoder reads back exactly the label's address", () => {
    for (const [kind, number] of [['lock', 'L-001'], ['tag', 'T/2026.7_B'], ['lock', 'LOCK-2026-ABCDEFGHIJ']] as const) {
      const address = labelAddress('https://holdpoint.example.com', kind, number);
      const read = decode(address);
      expect(read).toBe(address);
      expect(readLabelText(read)).toEqual({ kind, number });
    }
  });
});
