package sessions

import (
	"context"
	"crypto/rand"
	"crypto/sha256"
	"crypto/subtle"
	"database/sql"
	"encoding/base32"
	"encoding/base64"
	"errors"
	"fmt"
)

// Capability is what a share token lets its holder do.
type Capability uint8

const (
	// View lets its holder watch a session live.
	View Capability = iota + 1
	// Edit lets its holder change the session too.
	Edit
)

func (c Capability) String() string {
	switch c {
	case View:
		return "view"
	case Edit:
		return "edit"
	}
	return fmt.Sprintf("Capability(%d)", uint8(c))
}

// CanEdit reports whether c allows changes.
func (c Capability) CanEdit() bool { return c == Edit }

// TokenBytes is the number of random bytes in a share token: 128 bits. A
// token is written as base64url without padding, 22 characters.
const TokenBytes = 16

var tokenEncoding = base64.RawURLEncoding

// idEncoding writes short ids in lower-case base32 (RFC 4648 alphabet).
var idEncoding = base32.NewEncoding("abcdefghijklmnopqrstuvwxyz234567").WithPadding(base32.NoPadding)

// newToken returns a fresh token from crypto/rand.
func newToken() (string, error) {
	var b [TokenBytes]byte
	if _, err := rand.Read(b[:]); err != nil {
		return "", fmt.Errorf("sessions: reading random token: %w", err)
	}
	return tokenEncoding.EncodeToString(b[:]), nil
}

// tokenHash is what the store keeps of a token.
func tokenHash(token string) []byte {
	h := sha256.Sum256([]byte(token))
	return h[:]
}

// newID returns a short random id: nbytes of crypto/rand in base32
// (8 characters for 5 bytes).
func newID(nbytes int) (string, error) {
	b := make([]byte, nbytes)
	if _, err := rand.Read(b); err != nil {
		return "", fmt.Errorf("sessions: reading random id: %w", err)
	}
	return idEncoding.EncodeToString(b), nil
}

// uniqueID returns a new 40-bit id for which taken is false.
func uniqueID(taken func(string) bool) (string, error) {
	for {
		id, err := newID(5)
		if err != nil || !taken(id) {
			return id, err
		}
	}
}

// ByToken returns the session and capability that a share token grants. A
// token that is malformed or matches no session gives ErrNotFound. The
// token is looked up by its SHA-256 hash and the stored hash is then
// compared in constant time.
func (st *Store) ByToken(ctx context.Context, token string) (sessionID string, c Capability, err error) {
	if len(token) != tokenEncoding.EncodedLen(TokenBytes) {
		return "", 0, ErrNotFound
	}
	if _, err := tokenEncoding.DecodeString(token); err != nil {
		return "", 0, ErrNotFound
	}
	h := tokenHash(token)
	var editHash, viewHash []byte
	err = st.rdb.QueryRowContext(ctx,
		`SELECT id, edit_hash, view_hash FROM sessions WHERE edit_hash = ?1 OR view_hash = ?1`, h,
	).Scan(&sessionID, &editHash, &viewHash)
	if errors.Is(err, sql.ErrNoRows) {
		return "", 0, ErrNotFound
	}
	if err != nil {
		return "", 0, st.dbErr("looking up a token", err)
	}
	switch {
	case subtle.ConstantTimeCompare(h, editHash) == 1:
		return sessionID, Edit, nil
	case subtle.ConstantTimeCompare(h, viewHash) == 1:
		return sessionID, View, nil
	}
	return "", 0, ErrNotFound
}

// ReissueTokens gives session id new edit and view tokens and returns them;
// the old ones stop working at once. Every subscription of the session is
// closed with ErrTokensReissued, so connections opened with an old token
// must authenticate again.
func (st *Store) ReissueTokens(ctx context.Context, id string) (*Session, error) {
	h, err := st.hub(ctx, id)
	if err != nil {
		return nil, err
	}
	defer h.mu.Unlock()
	edit, view, err := newTokenPair()
	if err != nil {
		return nil, err
	}
	sealed, err := sealTokens(st.aead, id, edit, view)
	if err != nil {
		return nil, err
	}
	if _, err := st.writeExec(ctx, `UPDATE sessions SET edit_hash = ?, view_hash = ?, tokens_sealed = ? WHERE id = ?`,
		tokenHash(edit), tokenHash(view), sealed, id); err != nil {
		return nil, st.dbErr("re-issuing tokens", err)
	}
	h.closeSubs(ErrTokensReissued)
	return &Session{ID: id, Name: h.state.Name, CreatedAt: h.createdAt, Version: h.version, EditToken: edit, ViewToken: view}, nil
}

func newTokenPair() (edit, view string, err error) {
	if edit, err = newToken(); err != nil {
		return "", "", err
	}
	view, err = newToken()
	return edit, view, err
}

// accessKey is the context key of an [Access].
type accessKey struct{}

// Access is what a request may do to which session, as established from its
// token.
type Access struct {
	SessionID string
	Cap       Capability
}

// NewContext returns ctx carrying a.
func NewContext(ctx context.Context, a Access) context.Context {
	return context.WithValue(ctx, accessKey{}, a)
}

// FromContext returns the Access stored in ctx by [NewContext].
func FromContext(ctx context.Context) (Access, bool) {
	a, ok := ctx.Value(accessKey{}).(Access)
	return a, ok
}

// Tokens returns the current edit and view tokens of session id, for the
// bench computer's own user to open the session and show its share links.
// The database keeps only the tokens' hashes and a copy sealed under the
// data folder's key ([KeyFile]), from which they are read here. Tokens are
// never written to a log. An unknown id gives ErrNotFound; a copy that
// cannot be unsealed (the key file was replaced) gives an error wrapping
// ErrCorrupt, and re-issuing the tokens mends it.
func (st *Store) Tokens(ctx context.Context, id string) (edit, view string, err error) {
	if err := st.open(); err != nil {
		return "", "", err
	}
	var sealed []byte
	err = st.rdb.QueryRowContext(ctx, `SELECT tokens_sealed FROM sessions WHERE id = ?`, id).Scan(&sealed)
	if errors.Is(err, sql.ErrNoRows) {
		return "", "", ErrNotFound
	}
	if err != nil {
		return "", "", st.dbErr("reading tokens", err)
	}
	return st.openTokens(id, sealed)
}
