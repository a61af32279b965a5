import { describe, expect, it } from 'vitest';
import { contentDisposition, sanitiseFileName, sniffContentType } from '../../server/src/modules/attachments/file-checks';

describe('sanitiseFileName', () => {
  it.each([
    ['../../etc/passwd', 'passwd'],
    ['/etc/shadow', 'shadow'],
    ['C:\\Users\\rory\\Pictures\\valve.jpg', 'valve.jpg'],
    ['..\\..\\boot.ini', 'boot.ini'],
    ['photo.jpg\u0000.php', 'photo.jpg.php'],
    ['line\r\nbreak.png', 'linebreak.png'],
    ['valve\u202Egnp.exe', 'valvegnp.exe'],
    ['..', 'file'],
    ['', 'file'],
    ['   ', 'file'],
    ['.hidden', 'hidden'],
    ['trailing dots...', 'trailing dots'],
    ['Prüfbericht Ventil.pdf', 'Prüfbericht Ventil.pdf'],
  ])('when the name is %j, then it becomes %j', (raw, expected) => {
    expect(sanitiseFileName(raw)).toBe(expected);
  });

  it('when the name is longer than 120 characters, then it is cut to 120 and keeps its extension', () => {
    const name = sanitiseFileName(`${'x'.repeat(300)}.jpeg`);
    expect([...name]).toHaveLength(120);
    expect(name.endsWith('.jpeg')).toBe(true);
  });

  it('when a long name is made of characters outside the basic plane, then it is cut by characters, not by UTF-16 units', () => {
    const name = sanitiseFileName('🛢'.repeat(200));
    expect([...name]).toHaveLength(120);
    expect(name).toBe('🛢'.repeat(120));
  });
});

describe('sniffContentType', () => {
  it('when the bytes start with the JPEG marker, then it is a JPEG whatever the name says', async () => {
    const jpeg = Buffer.concat([Buffer.from([0xff, 0xd8, 0xff, 0xe0, 0x00, 0x10, 0x4a, 0x46, 0x49, 0x46, 0x00]), Buffer.alloc(64)]);
    expect(await sniffContentType(jpeg, 'report.pdf')).toEqual({ ok: true, contentType: 'image/jpeg' });
  });

  it('when the bytes are a WebP image, then it is accepted as image/webp', async () => {
    const webp = Buffer.concat([Buffer.from('RIFF'), Buffer.from([0x24, 0, 0, 0]), Buffer.from('WEBPVP8 '), Buffer.alloc(32)]);
    expect(await sniffContentType(webp, 'x.webp')).toEqual({ ok: true, contentType: 'image/webp' });
  });

  it('when the bytes are an HEIC photo (ftyp box, heic brand), then it is accepted', async () => {
    const heic = Buffer.concat([Buffer.from([0, 0, 0, 0x18]), Buffer.from('ftypheic'), Buffer.from([0, 0, 0, 0]), Buffer.from('mif1heic'), Buffer.alloc(32)]);
    expect(await sniffContentType(heic, 'IMG_0001.HEIC')).toEqual({ ok: true, contentType: 'image/heic' });
  });

  it('when the bytes are a ZIP archive named .csv, then it is refused: a signature beats the name', async () => {
    const zip = Buffer.concat([Buffer.from([0x50, 0x4b, 0x03, 0x04]), Buffer.alloc(60)]);
    const result = await sniffContentType(zip, 'readings.csv');
    expect(result.ok).toBe(false);
  });

  it('when plain UTF-8 text is named .CSV in capitals, then it is text/csv', async () => {
    expect(await sniffContentType(Buffer.from('a,b\n1,2\n'), 'READINGS.CSV')).toEqual({ ok: true, contentType: 'text/csv' });
  });
});

describe('contentDisposition', () => {
  it('when the name has quotes and non-ASCII letters, then the fallback is plain ASCII and the exact name is percent-encoded (RFC 6266, RFC 8187)', () => {
    expect(contentDisposition('attachment', 'Prüf "Ventil"; 1.pdf')).toBe(`attachment; filename="Pr_f _Ventil__ 1.pdf"; filename*=UTF-8''Pr%C3%BCf%20%22Ventil%22%3B%201.pdf`);
  });
});
