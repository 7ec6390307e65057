#include "api/web_routes.h"

#include <string>

#include "api/web_assets.h"

namespace ampledger {

const char* const kDashboardContentSecurityPolicy =
    "default-src 'none'; script-src 'self'; style-src 'self'; img-src 'self'; "
    "connect-src 'self'; base-uri 'none'; form-action 'none'; frame-ancestors 'none'";

namespace {

const WebAsset* FindAsset(const std::string& name) {
  for (const WebAsset& asset : WebAssets()) {
    if (name == asset.name) return &asset;
  }
  return nullptr;
}

HttpResponse AssetResponse(const WebAsset& asset) {
  HttpResponse response;
  response.content_type = asset.content_type;
  response.body.assign(reinterpret_cast<const char*>(asset.data), asset.size);
  response.headers = {
      {"Content-Security-Policy", kDashboardContentSecurityPolicy},
      // Revalidate every time: file names carry no version, and the files are small.
      {"Cache-Control", "no-cache"},
      {"X-Content-Type-Options", "nosniff"},
      {"Referrer-Policy", "no-referrer"},
  };
  return response;
}

}  // namespace

void AddWebRoutes(HttpServer& server) {
  server.Route("GET", "/", [](const HttpRequest&) -> Result<HttpResponse> {
    const WebAsset* index = FindAsset("index.html");
    if (index == nullptr) return Status::NotFound("this build has no dashboard");
    return AssetResponse(*index);
  });
  // Names are matched exactly against the embedded list: no path is ever opened.
  server.Route("GET", "/static/([A-Za-z0-9_.-]+)",
               [](const HttpRequest& request) -> Result<HttpResponse> {
                 const WebAsset* asset = FindAsset(request.path_params[0]);
                 if (asset == nullptr) {
                   return Status::NotFound("no dashboard file \"" + request.path_params[0] +
                                           "\"");
                 }
                 return AssetResponse(*asset);
               });
}

}  // namespace ampledger
