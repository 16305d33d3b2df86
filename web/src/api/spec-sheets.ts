import type { SpecSheet, SpecSheetInput, SpecSheetSummary } from '@shared/specs';
import { http } from './http';
import { qs } from './query';

export const specSheetsApi = {
  list: (q = '') => http.get<SpecSheetSummary[]>(`/api/spec-sheets${qs({ q })}`),
  get: (id: number) => http.get<SpecSheet>(`/api/spec-sheets/${id}`),
  create: (body: SpecSheetInput) => http.post<SpecSheet>('/api/spec-sheets', body),
  update: (id: number, body: SpecSheetInput) => http.put<SpecSheet>(`/api/spec-sheets/${id}`, body),
  remove: (id: number) => http.del<void>(`/api/spec-sheets/${id}`),
  forUnit: (unitId: number) => http.get<SpecSheet>(`/api/units/${unitId}/spec-sheet`),
};
