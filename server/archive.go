package server

import (
	"context"
	"errors"
	"io"
	"mime/multipart"
	"net/http"
	"os"
	"strconv"

	"matchbench/rfmath"
	"matchbench/sessions"
	"matchbench/web"
)

// exportArchive sends the session as one archive (sessions.ExportArchive):
// its state and every sweep file as uploaded. The archive is written to a
// temporary file first, so that a failure answers with an error, never a
// cut file.
func (s *Server) exportArchive(w http.ResponseWriter, r *http.Request) {
	a := accessFrom(r.Context())
	st, _, err := s.store.State(r.Context(), a.SessionID)
	if err != nil {
		s.fail(w, r, err)
		return
	}
	f, err := os.CreateTemp("", "matchbench-export-*.zip")
	if err != nil {
		s.log.Error("export archive", "err", err)
		http.Error(w, "The archive cannot be made: the server has no room for it; see its log.", http.StatusInternalServerError)
		return
	}
	defer os.Remove(f.Name())
	defer f.Close()
	if err := s.store.ExportArchive(r.Context(), a.SessionID, f); err != nil {
		s.fail(w, r, err)
		return
	}
	size, err := f.Seek(0, io.SeekCurrent)
	if err == nil {
		_, err = f.Seek(0, io.SeekStart)
	}
	if err != nil {
		s.log.Error("export archive", "err", err)
		http.Error(w, "The archive cannot be read back; see the server log.", http.StatusInternalServerError)
		return
	}
	attachment(w, safeName(st.Name)+".matchbench.zip", "application/zip")
	w.Header().Set("Content-Length", strconv.FormatInt(size, 10))
	io.Copy(w, f)
}

// importArchive makes a new session from an uploaded archive (multipart
// field "archive") on the bench computer itself, then opens it. An archive
// that cannot be imported is refused with the reason on the start page and
// nothing of it is kept.
func (s *Server) importArchive(w http.ResponseWriter, r *http.Request) {
	if !isLoopback(r) {
		http.Error(w, "Sessions can be imported only on the bench computer itself.", http.StatusForbidden)
		return
	}
	refuse := func(status int, msg string) {
		// A body cut off for its pace ends the request's context; the
		// answer that says so is still made.
		r := r.WithContext(context.WithoutCancel(r.Context()))
		s.render(w, r, status, web.StartPage(s.startView(r, "The archive was not imported: "+msg)))
	}
	limit := s.archiveLimit()
	r.Body = http.MaxBytesReader(w, r.Body, limit+64<<10)
	mr, err := r.MultipartReader()
	if err != nil {
		refuse(http.StatusBadRequest, "send it as a form upload (multipart field \"archive\")")
		return
	}
	var part *multipart.Part
	for {
		p, err := mr.NextPart()
		if errors.Is(err, errTooSlow) {
			refuse(http.StatusRequestTimeout, tooSlowMsg(s.cfg))
			return
		}
		if err != nil {
			refuse(http.StatusBadRequest, "choose an archive file (the form sent none)")
			return
		}
		if p.FormName() == "archive" {
			part = p
			break
		}
	}
	f, err := os.CreateTemp("", "matchbench-import-*.zip")
	if err != nil {
		s.log.Error("import archive", "err", err)
		refuse(http.StatusInternalServerError, "the server has no room for it; see its log")
		return
	}
	defer os.Remove(f.Name())
	defer f.Close()
	n, err := io.Copy(f, part)
	if errors.Is(err, errTooSlow) {
		refuse(http.StatusRequestTimeout, tooSlowMsg(s.cfg))
		return
	}
	if err != nil {
		var mbe *http.MaxBytesError
		if errors.As(err, &mbe) {
			refuse(http.StatusRequestEntityTooLarge, "it is larger than the limit of "+strconv.FormatInt(limit>>20, 10)+" MB")
			return
		}
		refuse(http.StatusBadRequest, "the upload was cut off: "+err.Error())
		return
	}
	if n == 0 {
		refuse(http.StatusBadRequest, "choose an archive file (the one sent is empty)")
		return
	}
	parse := func(name string, raw []byte) (*rfmath.Sweep, error) { return parseSweep(name, raw, s.cfg.FileLimits) }
	se, err := s.store.ImportArchive(r.Context(), f, n, s.cfg.MaxUploadBytes, parse)
	if err != nil {
		if errors.Is(err, sessions.ErrArchive) || errors.Is(err, sessions.ErrInvalid) {
			refuse(http.StatusUnprocessableEntity, err.Error())
			return
		}
		s.log.Error("import archive", "err", err)
		refuse(http.StatusInternalServerError, "the server could not store it; see its log")
		return
	}
	http.Redirect(w, r, "/s/"+se.EditToken+"/", http.StatusSeeOther)
}

// archiveLimit bounds an uploaded archive: as many files as a session may
// hold at the upload limit would be far too many, so a fixed number of
// them.
func (s *Server) archiveLimit() int64 { return 8 * s.cfg.MaxUploadBytes }
