/**
 * Watches the raw MQTT byte stream of one connection and reports the first packet whose declared
 * size exceeds the cap — from its fixed header, before the body has arrived. aedes (1.x) has no
 * packet-size limit of its own and would buffer the whole packet first.
 */
export class PacketSizeGuard {
  private state: 'header' | 'length' | 'body' = 'header';
  private length = 0;
  private multiplier = 1;
  private lengthBytes = 0;
  private toSkip = 0;
  tripped = false;

  constructor(private readonly maxPacketBytes: number) {}

  /** Feed the next chunk; returns false once a packet over the cap has been seen. */
  feed(chunk: Uint8Array): boolean {
    if (this.tripped) return false;
    let k = 0;
    while (k < chunk.length) {
      if (this.state === 'header') {
        k += 1; // control byte
        this.state = 'length';
        this.length = 0;
        this.multiplier = 1;
        this.lengthBytes = 0;
      } else if (this.state === 'length') {
        const b = chunk[k++];
        this.length += (b & 0x7f) * this.multiplier;
        this.multiplier *= 128;
        this.lengthBytes += 1;
        if ((b & 0x80) === 0) {
          if (1 + this.lengthBytes + this.length > this.maxPacketBytes) {
            this.tripped = true;
            return false;
          }
          this.toSkip = this.length;
          this.state = this.toSkip > 0 ? 'body' : 'header';
        } else if (this.lengthBytes >= 4) {
          // Malformed remaining-length; the MQTT parser will reject it too.
          this.tripped = true;
          return false;
        }
      } else {
        const take = Math.min(this.toSkip, chunk.length - k);
        k += take;
        this.toSkip -= take;
        if (this.toSkip === 0) this.state = 'header';
      }
    }
    return true;
  }
}
