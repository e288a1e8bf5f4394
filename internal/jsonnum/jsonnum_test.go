package jsonnum

import (
	"encoding/json"
	"testing"
)

func TestRoundAll(t *testing.T) {
	in := `{"b":0.9999999999999999,"a":[72.64999999999995,-0.0000001,3,1e-9,"0.9999999999999999",true,null,{"x":1.0000000000000002}],"s":"a \"q\" <b>"}`
	want := `{"b":1,"a":[72.65,0,3,0,"0.9999999999999999",true,null,{"x":1}],"s":"a \"q\" \u003cb\u003e"}`
	got, err := RoundAll([]byte(in))
	if err != nil {
		t.Fatal(err)
	}
	if string(got) != want {
		t.Errorf("RoundAll\n got %s\nwant %s", got, want)
	}
	var v any
	if err := json.Unmarshal(got, &v); err != nil {
		t.Errorf("not JSON: %v", err)
	}
	if Round(-1e-9) != 0 || Round(241.73999999999998) != 241.74 {
		t.Error("Round")
	}
}
