package wire

import "testing"

// Check values of the catalogue of parametrised CRC algorithms (the CRC RevEng
// catalogue, "CRC-16" class page), entries CRC-16/XMODEM, CRC-16/IBM-3740 and
// CRC-16/UMTS: "check" is the CRC of the nine ASCII bytes "123456789". The three values
// are quoted from memory of that catalogue; the bitwise register below is an
// independent reference for the table-driven code.
func TestCRCCatalogueCheckValues(t *testing.T) {
	check := []byte("123456789")
	tests := []struct {
		name       string
		poly, init uint16
		want       uint16
	}{
		{"CRC-16/XMODEM", 0x1021, 0x0000, 0x31C3},
		{"CRC-16/IBM-3740", 0x1021, 0xFFFF, 0x29B1},
		{"CRC-16/UMTS", 0x8005, 0x0000, 0xFEE8},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if got := crcTableUpdate(makeCRCTable(tt.poly), tt.init, check); got != tt.want {
				t.Errorf("table-driven: got %#04x, want %#04x", got, tt.want)
			}
			if got := crcBitwise(tt.poly, tt.init, check); got != tt.want {
				t.Errorf("bitwise: got %#04x, want %#04x", got, tt.want)
			}
		})
	}
	if got := CRC16(check); got != 0x31C3 {
		t.Errorf("CRC16(123456789) = %#04x, want 0x31c3 (catalogue check value)", got)
	}
}

func TestCRCTableMatchesBitwise(t *testing.T) {
	data := make([]byte, 1000)
	for i := range data {
		data[i] = byte(i*7 + i>>3)
	}
	for n := 0; n <= len(data); n += 37 {
		if a, b := CRC16(data[:n]), crcBitwise(crcPoly, 0, data[:n]); a != b {
			t.Fatalf("len %d: table %#04x, bitwise %#04x", n, a, b)
		}
	}
	if a, b := UpdateCRC16(CRC16(data[:10]), data[10:]), CRC16(data); a != b {
		t.Errorf("UpdateCRC16 split: %#04x, whole %#04x", a, b)
	}
}
