package sessions

import (
	"context"
	"errors"
	"testing"
)


func TestTokensReadBack(t *testing.T) {
	t.Parallel()
	st := openStore(t, Options{})
	s := create(t, st, "tokens")
	edit, view, err := st.Tokens(context.Background(), s.ID)
	if err != nil || edit != s.EditToken || view != s.ViewToken {
		t.Fatalf("Tokens = %q, %q, %v; want %q, %q", edit, view, err, s.EditToken, s.ViewToken)
	}
	re, err := st.ReissueTokens(context.Background(), s.ID)
	if err != nil {
		t.Fatal(err)
	}
	edit, view, _ = st.Tokens(context.Background(), s.ID)
	if edit != re.EditToken || view != re.ViewToken || edit == s.EditToken {
		t.Errorf("after re-issue Tokens = %q, %q; want %q, %q", edit, view, re.EditToken, re.ViewToken)
	}
	if _, _, err := st.Tokens(context.Background(), "nosuchid"); !errors.Is(err, ErrNotFound) {
		t.Errorf("unknown id: %v, want ErrNotFound", err)
	}
}
