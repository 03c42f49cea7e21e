/** Problem details (RFC 9457) as every API error answers. */
export interface ProblemDetails {
  type: string;
  title: string;
  status: number;
  detail?: string;
  /** Field-level validation errors, by path ("lesions.0.segment"). */
  errors?: { path: string; message: string }[];
}
