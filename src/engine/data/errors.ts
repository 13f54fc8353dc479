// The error a data problem raises when it stops a run: a user message (file and fix), never a stack trace.
import type { FileLocation, JsonPath } from '../report';

export class DataError extends Error {
  constructor(
    message: string,
    public location?: FileLocation,
    public path?: JsonPath,
  ) {
    super(message);
    this.name = 'DataError';
  }
}
