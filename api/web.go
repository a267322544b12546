package api

import (
	"embed"
	"io/fs"
	"mime"
	"net/http"
	"path"
	"strings"

	"github.com/gin-gonic/gin"

	"ringsieve/openapi"
)

// The browser page and the API reference page are static files embedded in the binary; nothing
// is fetched from the internet at run time.
//
//go:embed web
var webFS embed.FS

func (s *Server) serveFile(c *gin.Context, name string) {
	b, err := fs.ReadFile(webFS, "web/"+name)
	if err != nil {
		fail(c, badRequest(errNotFoundPath, "", "no file "+name))
		return
	}
	ct := mime.TypeByExtension(path.Ext(name))
	if ct == "" {
		ct = "application/octet-stream"
	}
	c.Header("Cache-Control", "no-cache")
	c.Header("X-Content-Type-Options", "nosniff")
	c.Data(http.StatusOK, ct, b)
}

func (s *Server) indexPage(c *gin.Context) { s.serveFile(c, "index.html") }

func (s *Server) docsPage(c *gin.Context) { s.serveFile(c, "docs.html") }

func (s *Server) static(c *gin.Context) {
	name := strings.TrimPrefix(path.Clean(c.Param("file")), "/")
	if name == "" || strings.Contains(name, "..") || strings.HasSuffix(name, ".html") {
		fail(c, badRequest(errNotFoundPath, "", "no such file"))
		return
	}
	s.serveFile(c, name)
}

// openapiJSON godoc
//
//	@Summary	The OpenAPI document of this service
//	@Tags		service
//	@Produce	json
//	@Success	200	{object}	object
//	@Router		/openapi.json [get]
func (s *Server) openapiJSON(c *gin.Context) {
	c.Data(http.StatusOK, "application/json", openapi.JSON)
}
