/** Stage `encode-shard.v1`: one sentence → its MessagePack bytes (format in core/encode-sentence.ts). */
import { encodeSentence, MsgpackWriter, type SentenceRecord } from '../core/encode-sentence.js';

export function encodeShard() {
  const w = new MsgpackWriter();
  return (record: SentenceRecord): Uint8Array => {
    w.reset();
    encodeSentence(w, record);
    return w.bytes();
  };
}
