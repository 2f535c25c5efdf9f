/** The one error shape every API failure answers with. */
export interface ApiErrorBody {
  error: {
    message: string;
    /** The offending field's path, dotted (`vehicle.battery.cca`), when one field is to blame. */
    field?: string;
    issues?: { path: string; message: string }[];
    /** CSV line or JSON path details for imports. */
    line?: number;
  };
}
