/** Request and response schemas of light-curve uploads and analyses, registered for the OpenAPI document. */
export {};
