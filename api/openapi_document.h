// api/openapi_document.h
// The OpenAPI 3.1 description of the whole API: the text of api/openapi.json, compiled in by
// api/embed_text.cmake. Served at /v1/openapi.json. Immutable; any thread.
#pragma once

namespace ampledger {

extern const char kOpenApiDocument[];

}  // namespace ampledger
