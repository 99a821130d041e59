package checkpoints

import (
	"archive/zip"
	"bytes"
	"encoding/json"
	"testing"

	"codeberg.org/sbinet/npyio/npz"

	"tidemark/data"
)

// TestExportReadByNpyio exports the test checkpoint's last weights and
// reads them back with npyio, an independent reader of the NumPy format:
// every tensor keeps its values and the config names them all.
func TestExportReadByNpyio(t *testing.T) {
	c := testCheckpoint(t)
	ex, err := c.Export(true, "m.ckpt", "test")
	if err != nil {
		t.Fatal(err)
	}
	var b bytes.Buffer
	if err := data.WriteNPZ(&b, zip.Store, ex.Arrays...); err != nil {
		t.Fatal(err)
	}
	r, err := npz.NewReader(bytes.NewReader(b.Bytes()), int64(b.Len()))
	if err != nil {
		t.Fatal(err)
	}
	for _, ts := range c.Last {
		var got []float64
		if err := r.Read(ts.Name+".npy", &got); err != nil || len(got) != len(ts.Data) || got[0] != ts.Data[0] {
			t.Errorf("%s: %v, %d values", ts.Name, err, len(got))
		}
	}
	var js []uint8
	if err := r.Read("config.npy", &js); err != nil {
		t.Fatal(err)
	}
	var cfg ExportConfig
	if err := json.Unmarshal(js, &cfg); err != nil || cfg.Which != "last" || len(cfg.Weights) != len(c.Last) || len(cfg.Masks) == 0 {
		t.Errorf("config %+v, %v", cfg, err)
	}
}
