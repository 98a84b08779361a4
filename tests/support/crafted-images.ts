// Hand-made image bytes for the hostile upload tests: chunks and segments placed where a
// polyglot hides its payload, and headers that declare far more pixels than the file holds.
// Formats: PNG chunks (ISO/IEC 15948 §5.3: length, type, data, CRC-32 of type and data), JPEG
// markers (ITU-T T.81 Annex B: COM = FFFE, SOF0 = FFC0 with height then width as 16-bit numbers),
// ZIP stored entries (PKWARE APPNOTE 6.3.x §4.3: local header, central directory, end record).
import { crc32, deflateSync } from 'node:zlib'

const PNG_SIGNATURE = Buffer.from([0x89, 0x50, 0x4E, 0x47, 0x0D, 0x0A, 0x1A, 0x0A])

export function pngChunk(type: string, data: Buffer): Buffer {
  const length = Buffer.alloc(4)
  length.writeUInt32BE(data.length)
  const body = Buffer.concat([Buffer.from(type, 'latin1'), data])
  const crc = Buffer.alloc(4)
  crc.writeUInt32BE(crc32(body))
  return Buffer.concat([length, body, crc])
}

/** The PNG with a chunk inserted right after IHDR (the signature is 8 bytes, IHDR 25). */
export function pngWithChunk(png: Buffer, type: string, data: Buffer): Buffer {
  return Buffer.concat([png.subarray(0, 33), pngChunk(type, data), png.subarray(33)])
}

/** A PNG of a few hundred bytes whose header says width × height: one row of data, then IEND. */
export function pngDeclaring(width: number, height: number): Buffer {
  const ihdr = Buffer.alloc(13)
  ihdr.writeUInt32BE(width, 0)
  ihdr.writeUInt32BE(height, 4)
  ihdr.set([8, 2, 0, 0, 0], 8) // 8 bits, RGB, deflate, no filter method other than 0, no interlace
  const oneRow = deflateSync(Buffer.alloc(1 + Math.min(width, 4096) * 3))
  return Buffer.concat([PNG_SIGNATURE, pngChunk('IHDR', ihdr), pngChunk('IDAT', oneRow), pngChunk('IEND', Buffer.alloc(0))])
}

/** The JPEG with a comment segment (COM) right after SOI. */
export function jpegWithComment(jpeg: Buffer, text: string): Buffer {
  const data = Buffer.from(text, 'latin1')
  const segment = Buffer.alloc(4)
  segment.set([0xFF, 0xFE])
  segment.writeUInt16BE(data.length + 2, 2)
  return Buffer.concat([jpeg.subarray(0, 2), segment, data, jpeg.subarray(2)])
}

/** The JPEG with its baseline frame header (SOF0) saying width × height instead. */
export function jpegDeclaring(jpeg: Buffer, width: number, height: number): Buffer {
  const copy = Buffer.from(jpeg)
  for (let i = 2; i < copy.length - 9; i++) {
    if (copy[i] === 0xFF && copy[i + 1] === 0xC0) {
      copy.writeUInt16BE(height, i + 5)
      copy.writeUInt16BE(width, i + 7)
      return copy
    }
  }
  throw new Error('no SOF0 marker: make the JPEG without progressive or arithmetic coding')
}

/** A ZIP archive with one stored (uncompressed) file; `at` is where it will start in the final file (appended to an image, GIFAR-style). */
export function storedZip(name: string, content: Buffer, at = 0): Buffer {
  const fileName = Buffer.from(name, 'utf8')
  const crc = crc32(content)
  const local = Buffer.alloc(30)
  local.writeUInt32LE(0x04034B50, 0)
  local.writeUInt16LE(20, 4)
  local.writeUInt32LE(crc, 14)
  local.writeUInt32LE(content.length, 18)
  local.writeUInt32LE(content.length, 22)
  local.writeUInt16LE(fileName.length, 26)
  const central = Buffer.alloc(46)
  central.writeUInt32LE(0x02014B50, 0)
  central.writeUInt16LE(20, 4)
  central.writeUInt16LE(20, 6)
  central.writeUInt32LE(crc, 16)
  central.writeUInt32LE(content.length, 20)
  central.writeUInt32LE(content.length, 24)
  central.writeUInt16LE(fileName.length, 28)
  central.writeUInt32LE(at, 42)
  const centralAt = at + local.length + fileName.length + content.length
  const end = Buffer.alloc(22)
  end.writeUInt32LE(0x06054B50, 0)
  end.writeUInt16LE(1, 8)
  end.writeUInt16LE(1, 10)
  end.writeUInt32LE(central.length + fileName.length, 12)
  end.writeUInt32LE(centralAt, 16)
  return Buffer.concat([local, fileName, content, central, fileName, end])
}
