using System.Text;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Tests.Imports;

/// <summary>
/// The CSV reader a record at a time: the same header, rows and errors (row, line, byte) as reading
/// the file in one piece, wherever the buffer cuts it (common practice for a streaming parser: the
/// result may not depend on the chunk size), and a large file read without holding it. The format
/// itself (RFC 4180 section 2, UTF-8 by RFC 3629) is checked in <c>Defects/CsvReaderTests</c>.
/// </summary>
public sealed class CsvFileReaderTests
{
    public static TheoryData<string, byte[]> Files()
    {
        static byte[] Utf8(string text) => Encoding.UTF8.GetBytes(text);
        return new TheoryData<string, byte[]>
        {
            // RFC 4180 section 2, rules 6 and 7: line breaks, commas and doubled quotes inside quotes.
            { "quoted", Utf8("h1,h2,h3\r\n\"aaa\",\"b\r\nbb\",\"c,cc\"\r\nzzz,\"y\"\"y\",xxx\r\n") },
            // A byte order mark, empty lines, CR alone as a line break, characters of 2, 3 and 4 bytes.
            { "bom, empty lines, CR", [0xEF, 0xBB, 0xBF, .. Utf8("period,value\n\n2020,é€😀\r\r\n2021,2\r2022,3")] },
            { "not UTF-8", [.. Utf8("a,b\n1,S"), 0xE3, .. Utf8("o\n2,x\n")] },
            { "field counts", Utf8("a,b\n1,2,3\n4\n5,6\n7,8,\n") },
            { "quote never closed", Utf8("period,value,source\n2018,0,ok\n2019,1,\"abc\n2020,2,x\n2021,3,y\n") },
            { "stray quote", Utf8("a,b\n1,2\n3,ab\"c\n4,5\n") },
            { "text after closing quote", Utf8("a,b\n1,2\n3,\"ab\"c\n4,5\n") },
            { "NUL", Utf8("a,b\n1,2\n3,x\0y\n") },
            { "header named twice", Utf8("period,value,Value\n2020,1,2\n") },
        };
    }

    private static (IReadOnlyList<string> Headers, List<string> Rows, List<string> Errors) ReadAll(byte[] bytes, int bufferSize)
    {
        using var stream = new MemoryStream(bytes);
        var reader = CsvFileReader.Open(stream, bufferSize);
        var rows = reader.ReadRows().Select(r => $"{r.Row}@{r.Line}: " + string.Join("|", reader.Headers.Select(h => r.Fields[h]))).ToList();
        return (reader.Headers, rows, reader.Errors.Select(e => $"{e.Row}@{e.Line}: {e.Message}").ToList());
    }

    [Theory]
    [MemberData(nameof(Files))]
    public void ReadRows_AnyBufferSize_SameHeaderRowsAndErrorsAsTheWholeFile(string name, byte[] bytes)
    {
        var whole = ReadAll(bytes, bytes.Length + 1);
        Assert.True(whole.Rows.Count + whole.Errors.Count > 0, name);
        foreach (var size in new[] { 1, 2, 3, 4, 5, 7, 11, 16 })
        {
            var cut = ReadAll(bytes, size);
            Assert.Equal(whole.Headers, cut.Headers);
            Assert.Equal(whole.Rows, cut.Rows);
            Assert.Equal(whole.Errors, cut.Errors);
        }
    }

    [Fact]
    public void ReadRows_SmallBuffer_ErrorNamesTheByteOfTheWholeFile()
    {
        // "a,b\n" is bytes 1-4, "1,2\n" 5-8, "3,ab" 9-12: the stray quote is byte 13 (RFC 4180 section 2, rule 5).
        var (_, rows, errors) = ReadAll(Encoding.UTF8.GetBytes("a,b\n1,2\n3,ab\"c\n4,5\n"), 4);

        Assert.Equal(["1@2: 1|2"], rows);
        var error = Assert.Single(errors);
        Assert.StartsWith("2@3: Row 2 (line 3): a quote inside a field that does not start with one (byte 13)", error, StringComparison.Ordinal);
    }

    [Fact]
    public void ReadRows_LargeFile_FirstRowBeforeTheFileIsRead_AndEveryRowOnce()
    {
        const int rows = 200_000;
        using var file = new GeneratedCsv(rows);
        var reader = CsvFileReader.Open(file);
        var count = 0;
        long readAtFirstRow = 0;
        double sum = 0;
        foreach (var row in reader.ReadRows())
        {
            if (count++ == 0)
            {
                readAtFirstRow = file.BytesRead;
            }
            sum += double.Parse(row["value"]!, System.Globalization.CultureInfo.InvariantCulture);
        }

        Assert.Empty(reader.Errors);
        Assert.Equal(rows, count);
        // Rows 0..n-1 hold the values 0..n-1 / 4.
        Assert.Equal((double)rows * (rows - 1) / 8, sum);
        Assert.True(file.BytesRead > 5_000_000, $"{file.BytesRead} bytes");
        Assert.True(readAtFirstRow <= CsvFileReader.DefaultBufferSize, $"{readAtFirstRow} bytes read before the first row");
    }

    /// <summary>A CSV file made as it is read, that cannot seek: "row,value,note" and one row per number.</summary>
    private sealed class GeneratedCsv(int rows) : Stream
    {
        private byte[] _pending = Encoding.UTF8.GetBytes("row,value,note\r\n");
        private int _offset;
        private int _next;

        public long BytesRead { get; private set; }

        public override bool CanRead => true;

        public override bool CanSeek => false;

        public override bool CanWrite => false;

        public override long Length => throw new NotSupportedException();

        public override long Position { get => BytesRead; set => throw new NotSupportedException(); }

        public override int Read(byte[] buffer, int offset, int count)
        {
            if (_offset == _pending.Length)
            {
                if (_next == rows)
                {
                    return 0;
                }
                _pending = Encoding.UTF8.GetBytes(FormattableString.Invariant($"{_next},{_next / 4.0},\"line of {_next}, with a comma\"\r\n"));
                _offset = 0;
                _next++;
            }
            var n = Math.Min(count, _pending.Length - _offset);
            Array.Copy(_pending, _offset, buffer, offset, n);
            _offset += n;
            BytesRead += n;
            return n;
        }

        public override void Flush()
        {
        }

        public override long Seek(long offset, SeekOrigin origin) => throw new NotSupportedException();

        public override void SetLength(long value) => throw new NotSupportedException();

        public override void Write(byte[] buffer, int offset, int count) => throw new NotSupportedException();
    }
}
