/** Request and response schemas of calibrator-set reads and exports, the archive and the distances endpoint, registered for the OpenAPI document. */
export {};
