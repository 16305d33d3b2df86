import type { Bias, BiasInput, BiasUpdate, Part, PartInput, PartUpdate, Rail, RailInput, RailUpdate } from '@shared/repair-log';
import { http } from './http';

function resource<Row, Input, Update>(path: string) {
  return {
    list: (jobId: number) => http.get<Row[]>(`/api/jobs/${jobId}/${path}`),
    create: (jobId: number, body: Input) => http.post<Row>(`/api/jobs/${jobId}/${path}`, body),
    update: (id: number, body: Update) => http.patch<Row>(`/api/${path}/${id}`, body),
    remove: (id: number) => http.del<void>(`/api/${path}/${id}`),
  };
}

export const partsApi = resource<Part, PartInput, PartUpdate>('parts');
export const railsApi = resource<Rail, RailInput, RailUpdate>('rails');
export const biasApi = resource<Bias, BiasInput, BiasUpdate>('bias');
