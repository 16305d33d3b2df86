import type { ApiToken, ApiTokenCreate, ApiTokenCreated } from '@shared/api-tokens';
import type { ModelHistory } from '@shared/model-history';
import type { SearchHit } from '@shared/search';
import { http } from './http';

export const tokensApi = {
  list: () => http.get<ApiToken[]>('/api/account/tokens'),
  create: (body: ApiTokenCreate) => http.post<ApiTokenCreated>('/api/account/tokens', body),
  revoke: (id: number) => http.del<ApiToken>(`/api/account/tokens/${id}`),
};

export const searchApi = {
  search: (q: string) => http.get<SearchHit[]>(`/api/search?${new URLSearchParams({ q })}`),
};

export const historyApi = {
  forJob: (jobId: number) => http.get<ModelHistory>(`/api/jobs/${jobId}/model-history`),
  forModel: (maker: string, model: string) => http.get<ModelHistory>(`/api/model-history?${new URLSearchParams({ maker, model })}`),
};

/** Download links for a job's CSV exports (the browser sends the session cookie). */
export const csvLinks = (jobId: number) => ({
  figures: `/api/jobs/${jobId}/figures.csv`,
  signalPath: `/api/jobs/${jobId}/signal-path.csv`,
});
