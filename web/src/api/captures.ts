import type { AnalysisResult } from '@shared/analysis-result';
import type { Calibration, CalibrationInput } from '@shared/calibrations';
import type { CaptureSummary } from '@shared/captures';
import type { Comparison } from '@shared/compare';
import type { SignalPath } from '@shared/signal-path';
import type { CrosstalkReferences, JobCrosstalk } from '@shared/input-crosstalk-compare';
import { http } from './http';
import { qs } from './query';

export const capturesApi = {
  list: (jobId: number) => http.get<CaptureSummary[]>(`/api/jobs/${jobId}/captures`),
  get: (id: number) => http.get<CaptureSummary>(`/api/captures/${id}`),
  result: (id: number) => http.get<AnalysisResult>(`/api/captures/${id}/result`),
  fileUrl: (id: number) => `/api/captures/${id}/file`,
  /** Played in byte ranges by the browser's audio element. */
  audioUrl: (id: number) => `/api/captures/${id}/audio`,
  analyseAgain: (id: number) => http.post<CaptureSummary>(`/api/captures/${id}/analyse`),
  remove: (id: number) => http.del<void>(`/api/captures/${id}`),
  inputCrosstalk: (jobId: number) => http.get<JobCrosstalk>(`/api/jobs/${jobId}/input-crosstalk`),
  setCrosstalkReferences: (jobId: number, body: CrosstalkReferences) => http.put<JobCrosstalk>(`/api/jobs/${jobId}/input-crosstalk/references`, body),
  signalPath: (jobId: number) => http.get<SignalPath>(`/api/jobs/${jobId}/signal-path`),
  compare: (jobId: number, q: { before?: number; after?: number; testPointId?: number }) =>
    http.get<Comparison>(`/api/jobs/${jobId}/compare${qs(q)}`),
};

export const calibrationsApi = {
  list: () => http.get<Calibration[]>('/api/calibrations'),
  create: (body: CalibrationInput) => http.post<Calibration>('/api/calibrations', body),
  update: (id: number, body: CalibrationInput) => http.put<Calibration>(`/api/calibrations/${id}`, body),
  remove: (id: number) => http.del<void>(`/api/calibrations/${id}`),
};
