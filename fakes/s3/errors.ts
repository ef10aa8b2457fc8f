/**
 * S3-shaped errors: the same XML body, status codes and error codes the real
 * service returns, so SDK code paths (error.name, $metadata.httpStatusCode)
 * behave the same against the fake.
 */

const STATUS: Record<string, number> = {
  AccessDenied: 403,
  AuthorizationHeaderMalformed: 400,
  AuthorizationQueryParametersError: 400,
  BadDigest: 400,
  IncompleteBody: 400,
  InternalError: 500,
  InvalidAccessKeyId: 403,
  InvalidArgument: 400,
  InvalidRequest: 400,
  RequestTimeTooSkewed: 403,
  SignatureDoesNotMatch: 403,
  XAmzContentSHA256Mismatch: 400,
};

export class S3Error extends Error {
  readonly code: string;
  readonly status: number;
  readonly detail: Record<string, string>;

  constructor(code: string, message: string, detail: Record<string, string> = {}) {
    super(message);
    this.name = "S3Error";
    this.code = code;
    this.status = STATUS[code] ?? 500;
    this.detail = detail;
  }

  toXML(requestId: string, hostId: string): string {
    const fields: Array<[string, string]> = [
      ["Code", this.code],
      ["Message", this.message],
      ...Object.entries(this.detail),
      ["RequestId", requestId],
      ["HostId", hostId],
    ];
    const body = fields.map(([k, v]) => `<${k}>${escapeXml(v)}</${k}>`).join("");
    return `<?xml version="1.0" encoding="UTF-8"?>\n<Error>${body}</Error>`;
  }
}

export function escapeXml(value: string): string {
  return value
    .replace(/&/g, "&amp;")
    .replace(/</g, "&lt;")
    .replace(/>/g, "&gt;")
    .replace(/"/g, "&quot;")
    .replace(/'/g, "&apos;");
}

/** Space-separated hex bytes, the way S3 reports StringToSignBytes. */
export function hexBytes(value: string): string {
  return Buffer.from(value, "utf8").toString("hex").replace(/(..)(?!$)/g, "$1 ");
}
