package sessions

import (
	"crypto/aes"
	"crypto/cipher"
	"crypto/rand"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
)

// KeyFile holds the key that seals the stored copy of each session's
// tokens. It is made on first Open (32 bytes from crypto/rand, mode 0600).
const KeyFile = "matchbench.key"

// loadKey reads the data folder's sealing key, making it if missing, and
// returns an AES-256-GCM AEAD. Called with the folder locked.
func loadKey(dir string) (cipher.AEAD, error) {
	path := filepath.Join(dir, KeyFile)
	key, err := os.ReadFile(path)
	if errors.Is(err, fs.ErrNotExist) {
		key = make([]byte, 32)
		if _, err := rand.Read(key); err != nil {
			return nil, fmt.Errorf("sessions: making the key: %w", err)
		}
		tmp := path + ".tmp"
		if err := os.WriteFile(tmp, key, 0o600); err != nil {
			return nil, fmt.Errorf("sessions: writing the key: %w", err)
		}
		if err := os.Rename(tmp, path); err != nil {
			return nil, fmt.Errorf("sessions: writing the key: %w", err)
		}
	} else if err != nil {
		return nil, fmt.Errorf("sessions: reading the key: %w", err)
	}
	if len(key) != 32 {
		return nil, fmt.Errorf("%w: %s holds %d bytes, want 32; remove it to make a new one (links then need re-issuing to be shown)",
			ErrCorrupt, path, len(key))
	}
	block, err := aes.NewCipher(key)
	if err != nil {
		return nil, err
	}
	return cipher.NewGCM(block)
}

// sealTokens returns nonce ‖ AES-GCM(edit ‖ view), bound to the session id
// as additional data so that a sealed copy moved to another row does not
// open.
func sealTokens(aead cipher.AEAD, id, edit, view string) ([]byte, error) {
	nonce := make([]byte, aead.NonceSize(), aead.NonceSize()+2*TokenBytes+aead.Overhead())
	if _, err := rand.Read(nonce); err != nil {
		return nil, err
	}
	e, err1 := tokenEncoding.DecodeString(edit)
	v, err2 := tokenEncoding.DecodeString(view)
	if err := errors.Join(err1, err2); err != nil {
		return nil, err
	}
	if len(e) != TokenBytes || len(v) != TokenBytes {
		return nil, fmt.Errorf("%w: a token is not %d bytes", ErrCorrupt, TokenBytes)
	}
	return aead.Seal(nonce, nonce, append(e, v...), []byte(id)), nil
}

// openTokens reverses sealTokens.
func (st *Store) openTokens(id string, sealed []byte) (edit, view string, err error) {
	n := st.aead.NonceSize()
	if len(sealed) < n {
		return "", "", fmt.Errorf("%w: session %q has no stored copy of its tokens; re-issue them", ErrCorrupt, id)
	}
	p, err := st.aead.Open(nil, sealed[:n], sealed[n:], []byte(id))
	if err != nil || len(p) != 2*TokenBytes {
		return "", "", fmt.Errorf("%w: the tokens of session %q cannot be unsealed with %s (was the key replaced?); re-issue them",
			ErrCorrupt, id, KeyFile)
	}
	return tokenEncoding.EncodeToString(p[:TokenBytes]), tokenEncoding.EncodeToString(p[TokenBytes:]), nil
}
