using Microsoft.EntityFrameworkCore.Migrations;

#nullable disable

namespace PanelRound.Migrations.Sqlite.Migrations
{
    /// <inheritdoc />
    public partial class PanelTimeZoneAndContact : Migration
    {
        /// <inheritdoc />
        protected override void Up(MigrationBuilder migrationBuilder)
        {
            migrationBuilder.AddColumn<string>(
                name: "ContactEmail",
                table: "Panels",
                type: "TEXT",
                maxLength: 256,
                nullable: true);

            migrationBuilder.AddColumn<string>(
                name: "ContactName",
                table: "Panels",
                type: "TEXT",
                maxLength: 200,
                nullable: true);

            migrationBuilder.AddColumn<string>(
                name: "TimeZone",
                table: "Panels",
                type: "TEXT",
                maxLength: 64,
                nullable: false,
                defaultValue: "UTC");
        }

        /// <inheritdoc />
        protected override void Down(MigrationBuilder migrationBuilder)
        {
            migrationBuilder.DropColumn(
                name: "ContactEmail",
                table: "Panels");

            migrationBuilder.DropColumn(
                name: "ContactName",
                table: "Panels");

            migrationBuilder.DropColumn(
                name: "TimeZone",
                table: "Panels");
        }
    }
}
