using System;
using Microsoft.EntityFrameworkCore.Migrations;

#nullable disable

namespace PanelRound.Migrations.Sqlite.Migrations
{
    /// <inheritdoc />
    public partial class BenchmarksAndRelations : Migration
    {
        /// <inheritdoc />
        protected override void Up(MigrationBuilder migrationBuilder)
        {
            migrationBuilder.AddColumn<int>(
                name: "Settings_BenchmarkWindow",
                table: "Panels",
                type: "INTEGER",
                nullable: false,
                defaultValue: 3);

            migrationBuilder.AddColumn<string>(
                name: "Settings_ExpertBenchmark",
                table: "Panels",
                type: "TEXT",
                maxLength: 20,
                nullable: false,
                defaultValue: "naive");

            migrationBuilder.AddColumn<double>(
                name: "Settings_RelationTolerance",
                table: "Panels",
                type: "REAL",
                nullable: false,
                defaultValue: 0.05);

            migrationBuilder.AddColumn<bool>(
                name: "Settings_ShowBenchmarkToExperts",
                table: "Panels",
                type: "INTEGER",
                nullable: false,
                defaultValue: false);

            migrationBuilder.CreateTable(
                name: "Relations",
                columns: table => new
                {
                    Id = table.Column<int>(type: "INTEGER", nullable: false)
                        .Annotation("Sqlite:Autoincrement", true),
                    PanelId = table.Column<int>(type: "INTEGER", nullable: false),
                    Shape = table.Column<int>(type: "INTEGER", nullable: false),
                    ResultQuestionId = table.Column<int>(type: "INTEGER", nullable: true),
                    ResultLabel = table.Column<string>(type: "TEXT", maxLength: 300, nullable: false),
                    ResultUnit = table.Column<string>(type: "TEXT", maxLength: 50, nullable: false),
                    ResultFactor = table.Column<double>(type: "REAL", nullable: false),
                    FirstQuestionId = table.Column<int>(type: "INTEGER", nullable: true),
                    FirstLabel = table.Column<string>(type: "TEXT", maxLength: 300, nullable: false),
                    FirstUnit = table.Column<string>(type: "TEXT", maxLength: 50, nullable: false),
                    FirstFactor = table.Column<double>(type: "REAL", nullable: false),
                    SecondQuestionId = table.Column<int>(type: "INTEGER", nullable: true),
                    SecondLabel = table.Column<string>(type: "TEXT", maxLength: 300, nullable: false),
                    SecondUnit = table.Column<string>(type: "TEXT", maxLength: 50, nullable: false),
                    SecondFactor = table.Column<double>(type: "REAL", nullable: false),
                    CreatedAt = table.Column<DateTime>(type: "TEXT", nullable: false)
                },
                constraints: table =>
                {
                    table.PrimaryKey("PK_Relations", x => x.Id);
                    table.ForeignKey(
                        name: "FK_Relations_Panels_PanelId",
                        column: x => x.PanelId,
                        principalTable: "Panels",
                        principalColumn: "Id",
                        onDelete: ReferentialAction.Cascade);
                    table.ForeignKey(
                        name: "FK_Relations_Questions_FirstQuestionId",
                        column: x => x.FirstQuestionId,
                        principalTable: "Questions",
                        principalColumn: "Id",
                        onDelete: ReferentialAction.Cascade);
                    table.ForeignKey(
                        name: "FK_Relations_Questions_ResultQuestionId",
                        column: x => x.ResultQuestionId,
                        principalTable: "Questions",
                        principalColumn: "Id",
                        onDelete: ReferentialAction.Cascade);
                    table.ForeignKey(
                        name: "FK_Relations_Questions_SecondQuestionId",
                        column: x => x.SecondQuestionId,
                        principalTable: "Questions",
                        principalColumn: "Id",
                        onDelete: ReferentialAction.Cascade);
                });

            migrationBuilder.CreateIndex(
                name: "IX_Relations_FirstQuestionId",
                table: "Relations",
                column: "FirstQuestionId");

            migrationBuilder.CreateIndex(
                name: "IX_Relations_PanelId",
                table: "Relations",
                column: "PanelId");

            migrationBuilder.CreateIndex(
                name: "IX_Relations_ResultQuestionId",
                table: "Relations",
                column: "ResultQuestionId");

            migrationBuilder.CreateIndex(
                name: "IX_Relations_SecondQuestionId",
                table: "Relations",
                column: "SecondQuestionId");
        }

        /// <inheritdoc />
        protected override void Down(MigrationBuilder migrationBuilder)
        {
            migrationBuilder.DropTable(
                name: "Relations");

            migrationBuilder.DropColumn(
                name: "Settings_BenchmarkWindow",
                table: "Panels");

            migrationBuilder.DropColumn(
                name: "Settings_ExpertBenchmark",
                table: "Panels");

            migrationBuilder.DropColumn(
                name: "Settings_RelationTolerance",
                table: "Panels");

            migrationBuilder.DropColumn(
                name: "Settings_ShowBenchmarkToExperts",
                table: "Panels");
        }
    }
}
