import type { Customer, CustomerInput, Unit, UnitInput } from '@shared/customers';
import { http } from './http';

const qs = (params: Record<string, string | number | undefined>) => {
  const s = new URLSearchParams();
  for (const [k, v] of Object.entries(params)) if (v !== undefined && v !== '') s.set(k, String(v));
  const text = s.toString();
  return text ? `?${text}` : '';
};

export const customersApi = {
  list: (q = '') => http.get<Customer[]>(`/api/customers${qs({ q })}`),
  get: (id: number) => http.get<Customer>(`/api/customers/${id}`),
  create: (body: CustomerInput) => http.post<Customer>('/api/customers', body),
  update: (id: number, body: CustomerInput) => http.put<Customer>(`/api/customers/${id}`, body),
  getUnit: (id: number) => http.get<Unit>(`/api/units/${id}`),
  units: (filter: { q?: string; customerId?: number } = {}) => http.get<Unit[]>(`/api/units${qs(filter)}`),
  createUnit: (body: UnitInput) => http.post<Unit>('/api/units', body),
  updateUnit: (id: number, body: UnitInput) => http.put<Unit>(`/api/units/${id}`, body),
};
