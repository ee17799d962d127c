/**
 * Epoch assembly for NMEA 0183 logs: consecutive sentences with the same UTC time of day form one
 * epoch; GSA (which has no time) belongs to the epoch of the sentence before it. The first sentence
 * of each type in an epoch is kept.
 */
import { decodeGga, decodeGsa, decodeGst, decodeRmc, type GgaFix, type GsaDop, type GstFix, type RmcFix } from './nmea-decode.js';
import { fileHasNmeaChecksums, frameNmeaSentences, NmeaSentenceTally } from './nmea-sentence.js';

export interface NmeaEpoch {
  todSec: number;
  line: number;
  gga?: GgaFix;
  ggaLine?: number;
  rmc?: RmcFix;
  rmcLine?: number;
  gst?: GstFix;
  gsa?: GsaDop;
}

/** Groups decoded sentences into epochs in file order. */
class NmeaEpochAssembler {
  readonly epochs: NmeaEpoch[] = [];
  private cur: NmeaEpoch | null = null;
  private pendingGsa: GsaDop | undefined;

  /**
   * Decode one sentence and attach it to its epoch: true when used, false when its type is not
   * one of those read, else the reason it cannot be decoded.
   */
  add(type: string, f: string[], lineNo: number): boolean | string {
    switch (type) {
      case 'GGA': {
        const d = decodeGga(f);
        if (typeof d === 'string') return d;
        const e = this.timed(d.todSec, lineNo);
        if (!e.gga) {
          e.gga = d;
          e.ggaLine = lineNo;
        }
        return true;
      }
      case 'RMC': {
        const d = decodeRmc(f);
        if (typeof d === 'string') return d;
        const e = this.timed(d.todSec, lineNo);
        if (!e.rmc) {
          e.rmc = d;
          e.rmcLine = lineNo;
        }
        return true;
      }
      case 'GST': {
        const d = decodeGst(f);
        if (typeof d === 'string') return d;
        const e = this.timed(d.todSec, lineNo);
        if (!e.gst) e.gst = d;
        return true;
      }
      case 'GSA': {
        const d = decodeGsa(f);
        if (typeof d === 'string') return d;
        if (this.cur) {
          if (!this.cur.gsa) this.cur.gsa = d;
        } else this.pendingGsa = d;
        return true;
      }
      default:
        return false;
    }
  }

  /** The epoch of time of day `todSec`: the open one, or a new one. */
  private timed(todSec: number, line: number): NmeaEpoch {
    if (this.cur && this.cur.todSec === todSec) return this.cur;
    const e: NmeaEpoch = { todSec, line };
    if (this.pendingGsa) {
      e.gsa = this.pendingGsa;
      this.pendingGsa = undefined;
    }
    this.cur = e;
    this.epochs.push(e);
    return e;
  }
}

export interface NmeaScan {
  epochs: NmeaEpoch[];
  fileHasChecksums: boolean;
  tally: NmeaSentenceTally;
  /** Sentences decoded and attached to an epoch. */
  used: number;
  /** Talkers of the used sentences. */
  talkers: Set<string>;
}

/** Frame, check and decode every sentence of `body` (BOM removed) and group them into epochs. */
export function collectNmeaEpochs(body: string): NmeaScan {
  const fileHasChecksums = fileHasNmeaChecksums(body);
  const tally = new NmeaSentenceTally();
  const assembler = new NmeaEpochAssembler();
  const talkers = new Set<string>();
  let used = 0;
  frameNmeaSentences(body, fileHasChecksums, tally, (sp, lineNo) => {
    const r = assembler.add(sp.type, sp.fields, lineNo);
    if (r === false) return;
    if (typeof r === 'string') {
      tally.bad.decode++;
      tally.note('row-skipped', `${sp.talker}${sp.type} sentence skipped: ${r}`, lineNo);
      return;
    }
    used++;
    talkers.add(sp.talker);
  });
  return { epochs: assembler.epochs, fileHasChecksums, tally, used, talkers };
}
