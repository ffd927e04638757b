import { FeatureSink } from '../../src/core/feature-sink.js';

/** A FeatureSink that also logs every canonical key it hashes, with its value. */
export class RecordingSink extends FeatureSink {
  readonly log: [string, number][] = [];
  override emit(value = 1): void {
    this.log.push([this.currentKey(), value]);
    super.emit(value);
  }
  emitted(prefix = ''): string[] {
    return this.log.map(([k]) => k).filter((k) => k.startsWith(prefix));
  }
}
