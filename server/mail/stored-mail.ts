/** One message as received by the local fake SMTP server and shown in the Outbox. */
export interface StoredMail {
  /** Random id given on receipt. */
  id: string;
  /** Receipt time, ISO 8601 UTC. */
  receivedAt: string;
  /** The From header, decoded (display name and address). */
  from: string;
  /**
   * Every address the message was delivered to: the SMTP envelope recipients (which include Bcc),
   * falling back to the To and Cc headers when the envelope is empty.
   */
  to: string[];
  subject: string;
  /** Plain-text body ('' when the message had none). */
  text: string;
  html?: string;
  /** The Message-ID header without angle brackets. */
  messageId?: string;
  /** The whole message as received (UTF-8 text). */
  raw: string;
}
