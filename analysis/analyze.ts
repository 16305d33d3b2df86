import {
  analysisResultSchema,
  analyzeOptionsSchema,
  type AnalysisResult,
  type AnalyzeOptions,
} from '../shared/analysis-result';
import { resultFromShares } from './channel-split';
import { AnalyzeOptionsError, ShareAnalyzer } from './share-analyzer';

// The engine's entry points: options checked against the shared schema, one streaming pass
// (share-analyzer.ts), the figures joined into the result (channel-split.ts, report.ts).

export { AnalyzeOptionsError };

/**
 * 1.2: the spectrogram's transient frames sit on the click screen's sharpest 5 ms sub-block.
 * 1.3: real spectra by a half-size complex transform (figures differ from 1.2 only in rounding).
 */
export const ENGINE_VERSION = '1.3.0';

export function parseAnalyzeOptions(options: unknown): AnalyzeOptions {
  const parsed = analyzeOptionsSchema.safeParse(options ?? {});
  if (!parsed.success) {
    const issue = parsed.error.issues[0]!;
    throw new AnalyzeOptionsError(`option ${issue.path.join('.') || '(root)'}: ${issue.message}`);
  }
  return parsed.data;
}

/** Push-based analyser of a whole capture: feed it the file's bytes in order, then call finish(). */
export class CaptureAnalyzer extends ShareAnalyzer {
  constructor(options: AnalyzeOptions = {}, channels?: readonly number[]) {
    super(parseAnalyzeOptions(options), channels);
  }

  finish(): AnalysisResult {
    const share = this.finishShare();
    return resultFromShares({ engineVersion: ENGINE_VERSION, info: this.info!, options: this.options, shares: [share] });
  }
}

/** Analyses a whole WAV file held in memory. */
export function analyzeWavBytes(bytes: Uint8Array, options?: AnalyzeOptions): AnalysisResult {
  const a = new CaptureAnalyzer(options);
  a.push(bytes);
  return a.finish();
}

/** Analyses a WAV file arriving in chunks (a file or network stream), in constant memory. */
export async function analyzeWavStream(
  chunks: AsyncIterable<Uint8Array>,
  options?: AnalyzeOptions,
): Promise<AnalysisResult> {
  const a = new CaptureAnalyzer(options);
  for await (const chunk of chunks) a.push(chunk);
  return a.finish();
}

/** Checks a result against the shared schema (no NaN, no Infinity, every field present). */
export function validateResult(result: unknown): AnalysisResult {
  return analysisResultSchema.parse(result);
}
