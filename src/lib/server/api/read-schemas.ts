/** Request and response schemas of the read API (relations, versions, digests, stars, reproduce, citations), registered for the OpenAPI document. */
export {};
