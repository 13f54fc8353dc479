// src/shared: code that runs on both sides of a process boundary.
import * as assert from 'assert';
import { createHash } from 'crypto';
import * as fc from 'fast-check';
import { base64, sha256Base64, sha256Bytes } from '../../src/shared/sha256';

const hex = (b: Uint8Array) => Buffer.from(b).toString('hex');

describe('shared/sha256', () => {
  it('matches the FIPS 180-2 appendix B examples ("abc", the 448-bit message, one million "a")', () => {
    assert.equal(hex(sha256Bytes('abc')), 'ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
    assert.equal(hex(sha256Bytes('abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq')), '248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1');
    assert.equal(hex(sha256Bytes('a'.repeat(1_000_000))), 'cdc76e5c9914fb9281a1c7e284d73e67f1809a48a497200e046d39ccc7112cd0');
  });

  it("equals Node's crypto digest('base64') on the empty string, block edges and any Unicode text", () => {
    const node = (s: string) => createHash('sha256').update(s, 'utf8').digest('base64');
    for (const n of [0, 1, 55, 56, 63, 64, 65, 119, 120, 128]) assert.equal(sha256Base64('x'.repeat(n)), node('x'.repeat(n)), `length ${n}`);
    fc.assert(fc.property(fc.string({ unit: 'binary', maxLength: 300 }), s => sha256Base64(s) === node(s)), { numRuns: 300 });
  });

  it('base64 pads like RFC 4648', () => {
    for (const s of ['', 'f', 'fo', 'foo', 'foob', 'fooba', 'foobar']) assert.equal(base64(new TextEncoder().encode(s)), Buffer.from(s).toString('base64'));
  });
});
