import type {
  CheckoutResponse,
  CreateQuoteRequest,
  Invoice,
  InvoiceLineInput,
  InvoiceStatus,
  InvoiceSummary,
  JobBilling,
  OutboxMessage,
  PortalJob,
  PortalJobSummary,
  PortalUnit,
  Quote,
  RecordPaymentRequest,
  ShopSettings,
} from '@shared/billing';
import { http } from './http';
import { qs } from './query';

export const invoicesApi = {
  list: (filter: { status?: InvoiceStatus; jobId?: number } = {}) => http.get<InvoiceSummary[]>(`/api/invoices${qs(filter)}`),
  get: (id: number) => http.get<Invoice>(`/api/invoices/${id}`),
  createFromJob: (jobId: number) => http.post<Invoice>('/api/invoices', { jobId }),
  update: (id: number, body: { lines: InvoiceLineInput[]; notes: string }) => http.put<Invoice>(`/api/invoices/${id}`, body),
  send: (id: number) => http.post<Invoice>(`/api/invoices/${id}/send`),
  emailAgain: (id: number) => http.post<Invoice>(`/api/invoices/${id}/email`),
  void: (id: number, reason: string) => http.post<Invoice>(`/api/invoices/${id}/void`, { reason }),
  recordPayment: (id: number, body: RecordPaymentRequest) => http.post<Invoice>(`/api/invoices/${id}/payments`, body),
  pdfUrl: (id: number) => `/api/invoices/${id}/invoice.pdf`,
};

export const quotesApi = {
  send: (body: CreateQuoteRequest) => http.post<Quote>('/api/quotes', body),
  withdraw: (id: number) => http.post<Quote>(`/api/quotes/${id}/withdraw`),
  approve: (id: number) => http.post<Quote>(`/api/my/quotes/${id}/approve`),
  decline: (id: number, reason: string) => http.post<Quote>(`/api/my/quotes/${id}/decline`, { reason }),
};

export const billingApi = {
  job: (jobId: number) => http.get<JobBilling>(`/api/billing/jobs/${jobId}`),
  readyNotice: (jobId: number) => http.post<OutboxMessage>(`/api/billing/jobs/${jobId}/ready-notice`),
  evidenceUrl: (jobId: number) => `/api/jobs/${jobId}/evidence.pdf`,
  settings: () => http.get<ShopSettings>('/api/settings/shop'),
  saveSettings: (body: ShopSettings) => http.put<ShopSettings>('/api/settings/shop', body),
};

export const outboxApi = {
  list: (filter: { jobId?: number } = {}) => http.get<OutboxMessage[]>(`/api/outbox${qs(filter)}`),
  retry: (id: number) => http.post<OutboxMessage>(`/api/outbox/${id}/retry`),
  attachmentUrl: (id: number, index: number) => `/api/outbox/${id}/attachments/${index}`,
};

export const portalApi = {
  jobs: () => http.get<PortalJobSummary[]>('/api/my/jobs'),
  job: (id: number) => http.get<PortalJob>(`/api/my/jobs/${id}`),
  units: () => http.get<PortalUnit[]>('/api/my/units'),
  pay: (invoiceId: number) => http.post<CheckoutResponse>(`/api/my/invoices/${invoiceId}/pay`),
};
