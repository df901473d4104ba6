using System.Text;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Tests.Defects;

/// <summary>
/// The CSV reader of every import against the format of RFC 4180, section 2 (rules 1-7, quoted
/// examples below), and UTF-8 as RFC 3629 section 3 defines it; no database.
/// </summary>
public sealed class CsvReaderTests
{
    private static CsvTable Read(string text) => CsvFiles.Read(Encoding.UTF8.GetBytes(text));

    private static string[][] Fields(CsvTable table) =>
        table.Rows.Select(r => table.Headers.Select(h => r.Fields[h]).ToArray()).ToArray();

    // RFC 4180 section 2, rule 1: "aaa,bbb,ccc CRLF zzz,yyy,xxx CRLF"; rule 2: the last record may
    // or may not have an ending line break. (LF alone is common practice and read the same way.)
    [Theory]
    [InlineData("aaa,bbb,ccc\r\nzzz,yyy,xxx\r\n")]
    [InlineData("aaa,bbb,ccc\r\nzzz,yyy,xxx")]
    [InlineData("aaa,bbb,ccc\nzzz,yyy,xxx\n")]
    public void Read_Rfc4180Rules1And2_OneRecordPerLine_LastLineBreakOptional(string text)
    {
        var table = Read(text);

        Assert.True(table.IsValid);
        Assert.Equal(["aaa", "bbb", "ccc"], table.Headers);
        Assert.Equal([["zzz", "yyy", "xxx"]], Fields(table));
        Assert.Equal(1, table.Rows[0].Row);
        Assert.Equal(2, table.Rows[0].Line);
    }

    // RFC 4180 section 2, rule 4: "Spaces are considered part of a field and should not be ignored."
    [Fact]
    public void Read_Rfc4180Rule4_SpacesArePartOfTheField()
    {
        var table = Read("a,b\n x , y\n");

        Assert.Equal([[" x ", " y"]], Fields(table));
    }

    // RFC 4180 section 2, rule 5: "aaa","bbb","ccc" CRLF zzz,yyy,xxx.
    [Fact]
    public void Read_Rfc4180Rule5_QuotedAndUnquotedFieldsReadAlike()
    {
        var table = Read("h1,h2,h3\r\n\"aaa\",\"bbb\",\"ccc\"\r\nzzz,yyy,xxx\r\n");

        Assert.Equal([["aaa", "bbb", "ccc"], ["zzz", "yyy", "xxx"]], Fields(table));
    }

    // RFC 4180 section 2, rule 6: "aaa","b CRLF bb","ccc" CRLF zzz,yyy,xxx; a comma in quotes is text too.
    [Fact]
    public void Read_Rfc4180Rule6_LineBreaksAndCommasInsideQuotes_StayInTheField()
    {
        var table = Read("h1,h2,h3\r\n\"aaa\",\"b\r\nbb\",\"c,cc\"\r\nzzz,yyy,xxx\r\n");

        Assert.True(table.IsValid);
        Assert.Equal([["aaa", "b\r\nbb", "c,cc"], ["zzz", "yyy", "xxx"]], Fields(table));
        Assert.Equal([2, 4], table.Rows.Select(r => r.Line));
        Assert.Equal([1, 2], table.Rows.Select(r => r.Row));
    }

    // RFC 4180 section 2, rule 7: "aaa","b""bb","ccc".
    [Fact]
    public void Read_Rfc4180Rule7_DoubledQuoteInsideQuotes_IsOneQuote()
    {
        var table = Read("h1,h2,h3\r\n\"aaa\",\"b\"\"bb\",\"ccc\"\r\n");

        Assert.Equal([["aaa", "b\"bb", "ccc"]], Fields(table));
    }

    // Common practice: spreadsheet programs write a UTF-8 byte order mark; empty lines hold no record.
    [Fact]
    public void Read_ByteOrderMarkAndEmptyLines_AreNotData()
    {
        var table = CsvFiles.Read([0xEF, 0xBB, 0xBF, .. Encoding.UTF8.GetBytes("period,value\n\n2020,1\n\n2021,2\n")]);

        Assert.True(table.IsValid);
        Assert.Equal(["period", "value"], table.Headers);
        Assert.Equal([["2020", "1"], ["2021", "2"]], Fields(table));
        Assert.Equal([3, 5], table.Rows.Select(r => r.Line));
    }

    // RFC 4180 section 2, rules 5-7: a field that opens a quote runs to the closing quote; never closed,
    // it would take every later row with it.
    [Fact]
    public void Read_QuoteNeverClosed_IsAnErrorNamingTheRowWhereItStarts_AndNoRowIsReturned()
    {
        var table = Read("period,value,source\n2018,0,ok\n2019,1,\"abc\n2020,2,x\n2021,3,y\n");

        var error = Assert.Single(table.Errors);
        Assert.Equal(2, error.Row);
        Assert.Equal(3, error.Line);
        Assert.StartsWith("Row 2 (line 3):", error.Message, StringComparison.Ordinal);
        Assert.Empty(table.Rows);
    }

    // RFC 4180 section 2, rule 5: "If fields are not enclosed with double quotes, then double quotes may not appear inside the fields."
    [Theory]
    [InlineData("a,b\n1,ab\"c\n")]
    [InlineData("a,b\n1, \"c\"\n")]
    [InlineData("a,b\n1,\"ab\"c\n")]
    public void Read_QuoteInsideAnUnquotedFieldOrAfterTheClosingQuote_IsAnErrorNamingTheRow(string text)
    {
        var table = Read(text);

        Assert.Equal(1, Assert.Single(table.Errors).Row);
        Assert.Empty(table.Rows);
    }

    // RFC 4180 section 2, rule 4: each line has the same number of fields, and "the last field in the
    // record must not be followed by a comma" (a trailing comma is one more, empty field).
    [Fact]
    public void Read_FieldCountOtherThanTheHeader_IsAnErrorForEachSuchRow()
    {
        var table = Read("a,b\n1,2,3\n4\n5,6\n7,8,\n");

        Assert.Equal([1, 2, 4], table.Errors.Select(e => e.Row));
        Assert.All(table.Errors, e => Assert.Contains("the header row has 2", e.Message, StringComparison.Ordinal));
        Assert.Empty(table.Rows);
    }

    [Fact]
    public void Read_HeaderNamingAColumnTwice_IsAnErrorOfTheHeader()
    {
        var table = Read("period,value,Value\n2020,1,2\n");

        Assert.Equal(0, Assert.Single(table.Errors).Row);
    }

    // RFC 3629 section 3: a lead byte 0xE3 must be followed by two continuation bytes (10xxxxxx);
    // a Latin-1 "ã" (0xE3) before "o" is not UTF-8. Overlong forms (0xC0 0xAF) and surrogates
    // (0xED 0xA0 0x80) are not UTF-8 either.
    [Theory]
    [InlineData(new byte[] { 0xE3 }, 8)]
    [InlineData(new byte[] { 0xC0, 0xAF }, 8)]
    [InlineData(new byte[] { 0xED, 0xA0, 0x80 }, 8)]
    public void Read_BytesThatAreNotUtf8_AreAnErrorNamingTheRowAndByte_NotAReplacementCharacter(byte[] bad, int byteNumber)
    {
        // "a,b\n" is bytes 1-4, "1," bytes 5-6, "S" byte 7: the bad sequence starts at byte 8.
        var table = CsvFiles.Read([.. Encoding.UTF8.GetBytes("a,b\n1,S"), .. bad, .. Encoding.UTF8.GetBytes("o\n2,x\n")]);

        var error = Assert.Single(table.Errors);
        Assert.Equal(1, error.Row);
        Assert.Contains($"byte {byteNumber} ", error.Message, StringComparison.Ordinal);
        Assert.Empty(table.Rows);
    }

    [Fact]
    public void Read_BytesThatAreNotUtf8InAQuotedFieldOrTheHeader_NameThatRow()
    {
        var quoted = CsvFiles.Read([.. Encoding.UTF8.GetBytes("a,b\n1,x\n2,\"S"), 0xE3, .. Encoding.UTF8.GetBytes("o, \"\"q\"\"\"\n")]);
        var header = CsvFiles.Read([.. Encoding.UTF8.GetBytes("a,S"), 0xE3, .. Encoding.UTF8.GetBytes("o\n1,2\n")]);

        Assert.Equal(2, Assert.Single(quoted.Errors).Row);
        Assert.Equal(0, Assert.Single(header.Errors).Row);
    }

    [Fact]
    public void Read_WhatWriteWrites_ReadsBackTheSameFields()
    {
        string?[][] rows = [["2020", "a \"quoted\" note, with a comma"], ["2021", "two\nlines"], ["2022", null]];
        using var writer = new StringWriter();
        CsvFiles.Write(writer, ["period", "source"], rows);

        var table = Read(writer.ToString());

        Assert.True(table.IsValid, string.Join(" ", table.Errors.Select(e => e.Message)));
        Assert.Equal(rows.Select(r => r.Select(f => f ?? "").ToArray()).ToArray(), Fields(table));
    }

    // One number rule for every import. The smallest normal double is 2^-1022 ≈ 2.2250738585072014e-308
    // (IEEE 754-2008, binary64: emin = -1022); below it a non-zero number loses digits or becomes 0.
    [Theory]
    [InlineData("1234.5", 1234.5)]
    [InlineData("-0.25", -0.25)]
    [InlineData("+3", 3.0)]
    [InlineData(".5", 0.5)]
    [InlineData("5.", 5.0)]
    [InlineData("1.2e6", 1.2e6)]
    [InlineData("1E-3", 1e-3)]
    [InlineData("0e-400", 0.0)]
    [InlineData("2.2250738585072014e-308", 2.2250738585072014e-308)]
    [InlineData("1e12", 1e12)]
    [InlineData("-1e12", -1e12)]
    public void ParseNumber_InvariantDecimals_AreRead(string text, double expected)
    {
        var value = CsvUploads.ParseNumber(text, out var error);

        Assert.Null(error);
        Assert.Equal(expected, value);
    }

    [Theory]
    [InlineData("1,234.5")]
    [InlineData("1 234")]
    [InlineData("1234,5")]
    [InlineData("NaN")]
    [InlineData("Infinity")]
    [InlineData("0x10")]
    [InlineData("1e")]
    [InlineData("e5")]
    [InlineData("1e-400")]
    [InlineData("4.9e-324")]
    [InlineData("1e-310")]
    [InlineData("1e400")]
    [InlineData("1.000001e12")]
    [InlineData("-2e12")]
    public void ParseNumber_AnythingElse_IsAnErrorWithAMessage(string text)
    {
        var value = CsvUploads.ParseNumber(text, out var error);

        Assert.Null(value);
        Assert.False(string.IsNullOrWhiteSpace(error));
        Assert.Contains(text, error, StringComparison.Ordinal);
    }
}
