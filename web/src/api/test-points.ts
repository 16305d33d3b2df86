import type { TestPoint, TestPointCreate, TestPointUpdate } from '@shared/test-points';
import { http } from './http';

export const testPointsApi = {
  list: (jobId: number) => http.get<TestPoint[]>(`/api/jobs/${jobId}/test-points`),
  create: (jobId: number, body: Partial<TestPointCreate> & Pick<TestPointCreate, 'name'>) =>
    http.post<TestPoint>(`/api/jobs/${jobId}/test-points`, body),
  update: (id: number, body: TestPointUpdate) => http.patch<TestPoint>(`/api/test-points/${id}`, body),
  remove: (id: number) => http.del<void>(`/api/test-points/${id}`),
  reorder: (jobId: number, ids: number[]) => http.put<TestPoint[]>(`/api/jobs/${jobId}/test-points/order`, { ids }),
};
