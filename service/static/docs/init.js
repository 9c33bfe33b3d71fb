/* qbar /docs: start Swagger UI on the spec that the page names (data-spec-url).
   A file of its own, not an inline script, so the page's Content-Security-Policy can forbid inline scripts. */
(function () {
  "use strict";
  var root = document.getElementById("swagger-ui");
  window.ui = SwaggerUIBundle({
    domNode: root,
    url: root.dataset.specUrl,
    deepLinking: true, // each tag and operation has its own #fragment to link to
    queryConfigEnabled: false, // ignore ?url=...: this page shows qbar's own spec only
    validatorUrl: null, // no badge from an outside validator
    presets: [SwaggerUIBundle.presets.apis],
    plugins: [SwaggerUIBundle.plugins.DownloadUrl],
    layout: "BaseLayout",
    docExpansion: "list",
    defaultModelsExpandDepth: 0,
    displayRequestDuration: true,
    filter: true,
    requestSnippetsEnabled: true, // "Try it out" shows the request as curl
    tryItOutEnabled: false
  });
}());
