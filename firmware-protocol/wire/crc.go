package wire

// CRC-16/XMODEM as named in the catalogue of parametrised CRC algorithms:
// width=16 poly=0x1021 init=0x0000 refin=false refout=false xorout=0x0000
// check=0x31c3 (the CRC of the ASCII bytes "123456789").

// crcPoly is the generator polynomial of CRC-16/XMODEM (x^16 + x^12 + x^5 + 1).
const crcPoly = 0x1021

// crcTable is the byte-at-a-time table for crcPoly, built once at package start.
var crcTable = makeCRCTable(crcPoly)

// makeCRCTable returns the 256-entry table of a non-reflected 16-bit CRC with the
// given polynomial: entry b is the register after shifting the byte b through it.
func makeCRCTable(poly uint16) *[256]uint16 {
	var t [256]uint16
	for b := range 256 {
		t[b] = crcBitwise(poly, 0, []byte{byte(b)})
	}
	return &t
}

// crcBitwise is the textbook shift register, one bit at a time, for a non-reflected
// 16-bit CRC; it is the reference the table-driven code is tested against.
func crcBitwise(poly, crc uint16, data []byte) uint16 {
	for _, b := range data {
		crc ^= uint16(b) << 8
		for range 8 {
			if crc&0x8000 != 0 {
				crc = crc<<1 ^ poly
			} else {
				crc <<= 1
			}
		}
	}
	return crc
}

// crcTableUpdate continues a non-reflected 16-bit CRC over data with a table from
// makeCRCTable.
func crcTableUpdate(t *[256]uint16, crc uint16, data []byte) uint16 {
	for _, b := range data {
		crc = crc<<8 ^ t[byte(crc>>8)^b]
	}
	return crc
}

// CRC16 returns the CRC-16/XMODEM of data: poly 0x1021, init 0, no reflection, no
// final XOR. CRC16([]byte("123456789")) is 0x31C3. A frame's CRC is CRC16 of the bytes
// between its start character and the " *" before the CRC.
func CRC16(data []byte) uint16 {
	return crcTableUpdate(crcTable, 0, data)
}

// UpdateCRC16 continues a CRC-16/XMODEM over more data: UpdateCRC16(CRC16(a), b) equals
// CRC16 of a followed by b.
func UpdateCRC16(crc uint16, data []byte) uint16 {
	return crcTableUpdate(crcTable, crc, data)
}
